import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import { type ConfidenceBandPoint, confidenceBandGrid } from './confidence-band-grid.ts';
import {
  type ConfidenceLimitCrossing,
  confidenceLimitCrossing,
  type LimitSide,
} from './confidence-limit-crossing.ts';
import type { ScaledAcceptanceLimit } from './q1e-acceptance-limits.ts';
import type { StabilityTransform } from './stability-batch.ts';
import { lineMeanAt, type StabilityLine } from './stability-line.ts';

/** Numbers in sentences: four significant figures, as the figures are printed elsewhere. */
const formatNumber = (value: number): string => String(Number(value.toPrecision(4)));

/** The Q1E evaluation of one regression line (one batch, or the pooled line). */
export interface LineShelfLife {
  label: string;
  batches: string[];
  /** Fitted mean at time 0 on the regression scale. */
  interceptAtTimeZero: number;
  /** Change per time unit on the regression scale. */
  slope: number;
  residualStandardDeviation: number;
  degreesOfFreedom: number;
  /** Student t quantile used for the confidence limits. */
  quantile: number;
  crossings: (ConfidenceLimitCrossing & { acceptanceLimit: LimitSide; limitValue: number })[];
  /** Earliest crossing over the limits (0 when outside at the start), or null when none within the horizon. */
  shelfLife: number | null;
  status: ConfidenceLimitCrossing['status'];
  reason: string;
  /** Filled in by the caller once the common plot range is known. */
  grid: ConfidenceBandPoint[];
}

/**
 * Evaluates one line against every acceptance limit: the earliest time its confidence limit
 * meets one (`confidenceLimitCrossing`), with the Student t quantile at `quantileLevel` and the
 * line's residual degrees of freedom.
 *
 * Throws nothing beyond `studentTQuantile`'s argument checks (the line has ≥ 1 degree of freedom).
 *
 * Example: a line with no crossing of either limit within the horizon gets shelfLife null and
 * status 'no-crossing-within-horizon'.
 */
export function lineShelfLife(
  line: StabilityLine,
  limits: readonly ScaledAcceptanceLimit[],
  quantileLevel: number,
  horizon: number,
): LineShelfLife {
  const quantile = studentTQuantile(quantileLevel, line.degreesOfFreedom);
  const crossings = limits.map((limit) => ({
    acceptanceLimit: limit.acceptanceLimit,
    limitValue: limit.value,
    ...confidenceLimitCrossing(line, limit.scaledValue, limit.sideOnScale, quantile, horizon),
  }));
  const reached = crossings.filter((crossing) => crossing.time !== null);
  reached.sort((a, b) => (a.time ?? 0) - (b.time ?? 0));
  const first = reached[0];
  return {
    label: line.label,
    batches: line.batches,
    interceptAtTimeZero: lineMeanAt(line, 0).mean,
    slope: line.slope,
    residualStandardDeviation: line.residualStandardDeviation,
    degreesOfFreedom: line.degreesOfFreedom,
    quantile,
    crossings,
    shelfLife: first?.time ?? null,
    status: first?.status ?? 'no-crossing-within-horizon',
    reason:
      first?.reason ??
      `No confidence limit meets an acceptance limit within ${formatNumber(horizon)} time units.`,
    grid: [],
  };
}

/** Adds the plot grid to an evaluated line. */
export function withGrid(
  evaluated: LineShelfLife,
  line: StabilityLine,
  transform: StabilityTransform,
  endTime: number,
  pointCount: number,
): LineShelfLife {
  return { ...evaluated, grid: confidenceBandGrid(line, transform, evaluated.quantile, endTime, pointCount) };
}
