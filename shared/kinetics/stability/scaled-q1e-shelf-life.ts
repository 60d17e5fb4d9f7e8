import { isUnitScaling, type SeriesScaling, seriesScaling } from '../magnitude-scaling.ts';
import type { LineShelfLife } from './line-shelf-life.ts';
import type { NestedModelTest } from './poolability.ts';
import { type Q1eShelfLife, type Q1eShelfLifeOptions, q1eShelfLife } from './q1e-shelf-life.ts';
import type { StabilityBatch } from './stability-batch.ts';

/**
 * `q1eShelfLife` with the internal scaling of `../magnitude-scaling.ts`: when the largest |value| or
 * time of the batches lies outside 2^-32 … 2^32, times are divided by s_t and values and limits
 * by s_C (powers of two, so the division is exact), the Q1E evaluation runs on those, and the
 * result is mapped back. Without it the regression's sums of squares overflow near 1e155 (a NaN
 * reaches the F distribution), underflow near 1e-300 (a "perfect fit"), and times near 1e300 look
 * like one time.
 *
 * Mapping back, on the regression scale y of the transform ('none': y = C, 'ln': y = ln C,
 * '1/x': y = 1/C): y = m·y′ + a with (m, a) = (s_C, 0), (1, ln s_C), (1/s_C, 0); so the intercept
 * at time 0 is m·y′ + a, the slope m·b′/s_t, the residual standard deviation m·σ′, residual sums
 * of squares m²·RSS′; F statistics and p values are unchanged; every time (crossings, shelf life,
 * horizon, longest observed time, grid) ×s_t and the back-transformed grid values ×s_C. The
 * sentences that quote a time are rewritten with the original number, formatted as the engine
 * formats it (four significant digits).
 *
 * Throws what `q1eShelfLife` throws. Example: three batches at 1e155 × (100.1, 99.5 …) give the
 * same shelf life, to rounding, as the batches at (100.1, 99.5 …).
 */
export function scaledQ1eShelfLife(
  batches: readonly StabilityBatch[],
  options: Q1eShelfLifeOptions,
): Q1eShelfLife {
  const observations = batches.flatMap((batch) => batch.observations);
  const scaling = seriesScaling(
    observations.map((observation) => observation.time),
    observations.map((observation) => observation.value),
  );
  if (isUnitScaling(scaling)) return q1eShelfLife(batches, options);
  const scaledBatches = batches.map((batch) => ({
    ...batch,
    observations: batch.observations.map((observation) => ({
      time: observation.time / scaling.time,
      value: observation.value / scaling.value,
    })),
  }));
  const scaledOptions: Q1eShelfLifeOptions = { ...options };
  if (options.lowerLimit !== undefined) scaledOptions.lowerLimit = options.lowerLimit / scaling.value;
  if (options.upperLimit !== undefined) scaledOptions.upperLimit = options.upperLimit / scaling.value;
  if (options.horizon !== undefined) scaledOptions.horizon = options.horizon / scaling.time;
  return inOriginalUnits(q1eShelfLife(scaledBatches, scaledOptions), options, scaling);
}

const formatted = (value: number) => String(Number(value.toPrecision(4)));

/** The sentence with each scaled time replaced by the original one. */
function retimed(text: string, times: readonly (number | null)[], st: number): string {
  let result = text;
  for (const time of times) {
    if (time === null) continue;
    result = result.replaceAll(formatted(time), formatted(time * st));
  }
  return result;
}

function inOriginalUnits(
  result: Q1eShelfLife,
  options: Q1eShelfLifeOptions,
  scaling: SeriesScaling,
): Q1eShelfLife {
  const { time: st, value: sc } = scaling;
  const [m, a] =
    options.transform === 'none' ? [sc, 0] : options.transform === 'ln' ? [1, Math.log(sc)] : [1 / sc, 0];
  const test = (entry: NestedModelTest): NestedModelTest => ({
    ...entry,
    residualSumOfSquaresFull: entry.residualSumOfSquaresFull * m * m,
    residualSumOfSquaresReduced: entry.residualSumOfSquaresReduced * m * m,
  });
  const byTime = (value: number | null) => (value === null ? null : value * st);
  const byValue = (value: number | null) => (value === null ? null : value * sc);
  const allTimes = [result.shelfLife, result.horizon];
  const line = (entry: LineShelfLife): LineShelfLife => {
    const quoted = [entry.shelfLife, result.horizon, ...entry.crossings.flatMap((c) => [c.time, c.horizon])];
    allTimes.push(...quoted);
    return {
      ...entry,
      interceptAtTimeZero: entry.interceptAtTimeZero * m + a,
      slope: (entry.slope * m) / st,
      residualStandardDeviation: entry.residualStandardDeviation * m,
      crossings: entry.crossings.map((crossing) => ({
        ...crossing,
        time: byTime(crossing.time),
        horizon: crossing.horizon * st,
        limitValue: crossing.limitValue * sc,
        reason: retimed(crossing.reason, [crossing.time, crossing.horizon], st),
      })),
      shelfLife: byTime(entry.shelfLife),
      reason: retimed(entry.reason, quoted, st),
      grid: entry.grid.map((point) => ({
        time: point.time * st,
        mean: byValue(point.mean),
        lowerCL: byValue(point.lowerCL),
        upperCL: byValue(point.upperCL),
      })),
    };
  };
  const lines = result.lines.map(line);
  const poolability =
    result.poolability === null
      ? null
      : {
          ...result.poolability,
          slopeTest: test(result.poolability.slopeTest),
          interceptTest:
            result.poolability.interceptTest === null ? null : test(result.poolability.interceptTest),
        };
  return {
    ...result,
    poolability,
    lines,
    shelfLife: byTime(result.shelfLife),
    reason: retimed(result.reason, allTimes, st),
    horizon: result.horizon * st,
    extrapolation: {
      ...result.extrapolation,
      longestObservedTime: result.extrapolation.longestObservedTime * st,
    },
  };
}
