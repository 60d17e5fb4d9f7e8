/**
 * The choice of internal scale factors for data of extreme magnitude (issue 12 §6): for times and
 * values, the power of two at or below the largest magnitude when that magnitude lies outside
 * `COMFORTABLE_RANGE`, else 1. Division by a power of two changes only the exponent of a double,
 * so the scaled data are the original data exactly (IEEE 754-2019 §5.4.1: the result is exact
 * when representable). The kinetics (`series-scaling.ts`) and the ICH Q1E evaluation
 * (`stability/scaled-q1e-shelf-life.ts`) map their results back with these factors.
 *
 * Throws nothing. Example: seriesScaling([0, 3, 6], [1e200, 9e199, 8e199]) gives time 1 and
 * value 2^664 (≈ 7.7e199, the power of two at or below 1e200).
 */
/** Largest magnitudes analysed as they are; outside, the series is scaled (2^-32 … 2^32). */
export const COMFORTABLE_RANGE: readonly [number, number] = [2 ** -32, 2 ** 32];

export interface SeriesScaling {
  /** s_t and s_C: powers of two (1 when that axis is not scaled). */
  time: number;
  value: number;
}

const UNIT: SeriesScaling = { time: 1, value: 1 };

function powerOfTwoScale(largest: number): number {
  if (!(largest > 0) || !Number.isFinite(largest)) return 1;
  if (largest >= COMFORTABLE_RANGE[0] && largest <= COMFORTABLE_RANGE[1]) return 1;
  let exponent = Math.floor(Math.log2(largest));
  // Math.log2 may round across a power of two; keep 2^exponent ≤ largest < 2^(exponent+1).
  if (2 ** exponent > largest) exponent -= 1;
  if (exponent < -1022) exponent = -1022;
  return 2 ** exponent;
}

/** The scaling of a prepared series (its used times and values). */
export function seriesScaling(times: ArrayLike<number>, values: ArrayLike<number>): SeriesScaling {
  let largestTime = 0;
  let largestValue = 0;
  for (let i = 0; i < times.length; i++) largestTime = Math.max(largestTime, Math.abs(times[i]!));
  for (let i = 0; i < values.length; i++) largestValue = Math.max(largestValue, Math.abs(values[i]!));
  const scaling = { time: powerOfTwoScale(largestTime), value: powerOfTwoScale(largestValue) };
  return scaling.time === 1 && scaling.value === 1 ? UNIT : scaling;
}

export const isUnitScaling = (scaling: SeriesScaling) => scaling.time === 1 && scaling.value === 1;
