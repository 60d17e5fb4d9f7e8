import type { StabilityTransform } from './stability-batch.ts';
import { lineMeanAt, type StabilityLine } from './stability-line.ts';
import { fromStabilityScale, transformReversesOrder } from './stability-scale.ts';

/** One point of the plotted mean line and its confidence limits, on the attribute's own scale. */
export interface ConfidenceBandPoint {
  time: number;
  /** Back-transformed mean (for 'ln' the geometric-mean curve); null where it does not exist. */
  mean: number | null;
  lowerCL: number | null;
  upperCL: number | null;
}

/**
 * Evenly spaced points of a regression line and its confidence limits for a plot, from time 0
 * to `endTime`, back-transformed to the attribute's own scale.
 *
 * Formula in words: at each time, m ± q·se on the regression scale (`lineMeanAt`), mapped back
 * with `fromStabilityScale`. The reciprocal scale reverses order, so there the lower limit of the
 * attribute comes from m + q·se and the upper from m − q·se; a reciprocal ≤ 0 has no value and
 * gives null (the limit is unbounded there).
 *
 * Throws nothing; `pointCount` ≥ 2 and a finite `endTime` > 0 are the caller's to ensure.
 *
 * Example: a line 100 − 0.5t with no uncertainty, scale 'none', endTime 10, 3 points gives
 * times 0, 5, 10 with mean = lowerCL = upperCL = 100, 97.5, 95.
 */
export function confidenceBandGrid(
  line: StabilityLine,
  transform: StabilityTransform,
  quantile: number,
  endTime: number,
  pointCount: number,
): ConfidenceBandPoint[] {
  const reverses = transformReversesOrder(transform);
  return Array.from({ length: pointCount }, (_, i) => {
    const time = (endTime * i) / (pointCount - 1);
    const { mean, standardError } = lineMeanAt(line, time);
    const low = fromStabilityScale(mean - quantile * standardError, transform);
    const high = fromStabilityScale(mean + quantile * standardError, transform);
    return {
      time,
      mean: fromStabilityScale(mean, transform),
      lowerCL: reverses ? high : low,
      upperCL: reverses ? low : high,
    };
  });
}
