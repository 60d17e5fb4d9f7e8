// Issue 12 §6: values from 1e-300 to 1e300 and times up to 1e300 give the same relative results
// as the same data near unit scale, or a clear refusal. The expectation is a property of the
// rate laws themselves, not an outside number: with C = s_C·c and t = s_t·τ, −dC/dt = k·Cⁿ gives
// k = κ·s_C^(1−n)/s_t, C0 = s_C·c0, every time ×s_t, every value ×s_C and AICc differences
// unchanged. Negative values: the first- and second-order laws cannot produce them (Atkins &
// de Paula, Physical Chemistry, 9th ed., §21.3). Invented data.
import { describe, expect, it } from 'vitest';
import { analyseDataset } from './analyse-dataset.ts';
import { analyseSeries } from './analyse-series.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import type { SeriesAnalysis, SeriesOptions } from './series-analysis.ts';
import { isUnitScaling, seriesScaling } from './series-scaling.ts';
import type { Series } from './types.ts';

const RELATIVE = 1e-9;
const NOISE = [0.004, -0.003, 0.0035, -0.004, 0.002, -0.0015, 0.003, -0.002, 0.001];
const MONTHS = [0, 1, 2, 3, 6, 9, 12, 18, 24];

/** First-order loss, k = 0.08 per month (85 % reacted at 24 months), with 0.4 % scatter. */
function series(valueScale: number, timeScale: number, id = 'VZ-001'): Series {
  return {
    id,
    timeUnit: 'month',
    valueUnit: 'mg/mL',
    temperatureC: 25,
    observations: MONTHS.map((month, i) => ({
      time: month * timeScale,
      value: 100 * Math.exp(-0.08 * month) * (1 + NOISE[i]!) * valueScale,
    })),
  };
}
const options = (valueScale: number, timeScale: number): SeriesOptions => ({
  lowerLimit: 50 * valueScale,
  predictAt: [6 * timeScale, 30 * timeScale],
});

function close(actual: number | null | undefined, expected: number | null | undefined, what: string) {
  expect(actual === null || actual === undefined, `${what} present`).toBe(
    expected === null || expected === undefined,
  );
  if (actual === null || actual === undefined || expected === null || expected === undefined) return;
  const scale = Math.max(Math.abs(expected), Number.MIN_VALUE);
  expect(Math.abs(actual - expected) / scale, `${what}: ${actual} against ${expected}`).toBeLessThanOrEqual(
    RELATIVE,
  );
}
const closePair = (
  actual: [number, number] | null | undefined,
  expected: [number, number] | null,
  factor: number,
  what: string,
) => {
  expect(actual === null || actual === undefined, `${what} present`).toBe(expected === null);
  if (actual && expected) {
    close(actual[0], expected[0] * factor, `${what}[0]`);
    close(actual[1], expected[1] * factor, `${what}[1]`);
  }
};

/** log10 of k's factor for order n; outside ±300 the rate constant cannot be a double. */
const log10RateFactor = (n: number, valueScale: number, timeScale: number) =>
  (1 - n) * Math.log10(valueScale) - Math.log10(timeScale);

function compare(scaled: SeriesAnalysis, unit: SeriesAnalysis, valueScale: number, timeScale: number) {
  expect(scaled.selectedOrder).toBe(unit.selectedOrder);
  expect(scaled.errorModel).toBe(unit.errorModel);
  for (const [index, model] of unit.models.entries()) {
    const other = scaled.models[index]!;
    const n = model.order === 'n' ? (model.n ?? 1) : model.order;
    const exponent = log10RateFactor(n, valueScale, timeScale);
    const magnitude = exponent + Math.log10(Math.abs(model.k ?? 1));
    if (magnitude > -307.6 && magnitude < 308.2 && (magnitude < -307 || magnitude > 308)) continue; // at the edge
    if (magnitude <= -307.6 || magnitude >= 308.2) {
      // A clear refusal: k in these units is no double.
      expect(other.applicable).toBe(false);
      expect(other.reason).toMatch(/outside the range of double precision/);
      continue;
    }
    // 10^exponent in two halves: the factor alone may overflow where k times it does not.
    const scaledRate = (rate: number) => rate * 10 ** (exponent / 2) * 10 ** (exponent / 2);
    close(other.k, scaledRate(model.k ?? Number.NaN), `k of ${model.order}`);
    if (model.order === 'n') {
      // The free order's k interval is no constant multiple (its unit depends on n, so the
      // uncertainty of n enters it); n and its interval are unit-free.
      close(other.n, model.n, 'n');
      closePair(other.nCi95, model.nCi95 ?? null, 1, 'nCi95');
      expect(other.kCi95 === null).toBe(model.kCi95 === null);
    } else {
      const expected =
        model.kCi95 && ([scaledRate(model.kCi95[0]), scaledRate(model.kCi95[1])] as [number, number]);
      closePair(other.kCi95, expected, 1, `kCi95 of ${model.order}`);
    }
    close(other.c0, (model.c0 ?? Number.NaN) * valueScale, `c0 of ${model.order}`);
    closePair(other.c0Ci95, model.c0Ci95, valueScale, `c0Ci95 of ${model.order}`);
    close(other.weight, model.weight, `weight of ${model.order}`);
    closePair(other.halfLife?.ci95, model.halfLife?.ci95 ?? null, timeScale, `half-life of ${model.order}`);
  }
  const lowest = (a: SeriesAnalysis) => Math.min(...a.selection.aicc.filter((v): v is number => v !== null));
  for (const [index, value] of scaled.selection.aicc.entries()) {
    const reference = unit.selection.aicc[index] ?? null;
    if (value === null || reference === null) expect(value).toBe(reference);
    else expect(Math.abs(value - lowest(scaled) - (reference - lowest(unit)))).toBeLessThan(1e-6);
  }
  close(scaled.t90?.estimate, (unit.t90?.estimate ?? Number.NaN) * timeScale, 't90');
  closePair(scaled.t90?.ci95, unit.t90?.ci95 ?? null, timeScale, 't90 interval');
  close(
    scaled.timeToLimit?.lower?.estimate,
    (unit.timeToLimit?.lower?.estimate ?? Number.NaN) * timeScale,
    'time to limit',
  );
  closePair(
    scaled.timeToLimit?.lower?.ci95,
    unit.timeToLimit?.lower?.ci95 ?? null,
    timeScale,
    'time-to-limit interval',
  );
  for (const [index, prediction] of (unit.predictions ?? []).entries()) {
    const other = scaled.predictions![index]!;
    close(other.estimate, (prediction.estimate ?? Number.NaN) * valueScale, 'prediction');
    closePair(other.confidenceInterval, prediction.confidenceInterval, valueScale, 'prediction interval');
  }
  for (const [index, point] of (unit.diagnostics?.points ?? []).entries()) {
    close(scaled.diagnostics!.points[index]!.studentised, point.studentised, 'studentised residual');
  }
  expect(scaled.warnings.map((warning) => warning.code)).toEqual(
    unit.warnings.map((warning) => warning.code),
  );
}

const VALUE_SCALES = [1e-300, 1e-200, 1e-100, 1e-20, 1e20, 1e78, 1e100, 1e154, 1e155, 1e200, 1e300];
const TIME_SCALES = [1, 1e-10, 1e20, 1e100, 1e300];

describe('internal scaling (issue 12 §6)', () => {
  const unit = analyseSeries(series(1, 1), options(1, 1));

  it('the unit-scale series is a clear first-order case with intervals (what the comparison rests on)', () => {
    expect(unit.selectedOrder).toBe(1);
    expect(unit.t90?.ci95).not.toBeNull();
    expect(unit.timeToLimit?.lower?.ci95).not.toBeNull();
  });

  it('gives the same relative results for values 1e-300…1e300 and times up to 1e300, or refuses k that is no double', () => {
    for (const valueScale of VALUE_SCALES) {
      for (const timeScale of TIME_SCALES) {
        const scaled = analyseSeries(series(valueScale, timeScale), options(valueScale, timeScale));
        compare(scaled, unit, valueScale, timeScale);
      }
    }
  });

  it('through analyseDataset: the same series figures and Arrhenius-free result, no crash at 1e155', () => {
    const reference = analyseDataset([series(1, 1)], options(1, 1));
    for (const [valueScale, timeScale] of [
      [1e155, 1],
      [1e-300, 1],
      [1e300, 1],
      [1e78, 1e100],
    ] as const) {
      const result = analyseDataset([series(valueScale, timeScale)], options(valueScale, timeScale));
      expect(result.series[0]!.error).toBeNull();
      compare(result.series[0]!.analysis!, reference.series[0]!.analysis!, valueScale, timeScale);
    }
  });

  it('leaves ordinary data untouched: no scaling inside 2^-32…2^32, a power of two outside', () => {
    const ordinary = series(1, 1);
    const at = (s: Series) =>
      [s.observations.map((o) => o.time), s.observations.map((o) => o.value)] as const;
    expect(isUnitScaling(seriesScaling(...at(ordinary)))).toBe(true);
    const extreme = seriesScaling(...at(series(1e200, 1e300)));
    for (const factor of [extreme.time, extreme.value]) expect(Math.log2(factor) % 1).toBe(0);
    expect(extreme.value).toBeLessThanOrEqual(100.4 * 1e200);
    expect(extreme.value * 2).toBeGreaterThan(100.4 * 1e200);
  });
});

describe('negative values (issue 12 §6)', () => {
  const crossing: Series = {
    id: 'IMP-1',
    timeUnit: 'month',
    valueUnit: 'mg/mL',
    observations: [0, 1, 2, 3, 4, 5, 6].map((time, i) => ({ time, value: 1 - 0.2 * time + NOISE[i]! })),
  };

  it('first, second and free order are not applicable, with the reason naming the point', () => {
    const analysis = analyseSeries(crossing);
    expect(analysis.models[0]!.applicable).toBe(true);
    for (const index of [1, 2, 3]) {
      expect(analysis.models[index]!.applicable).toBe(false);
      expect(analysis.models[index]!.reason).toMatch(
        /cannot produce a negative value, and the point at time 5 has value -0\.0015/,
      );
    }
  });

  it('refuses the series when the analyst fixes first or second order', () => {
    for (const order of [1, 2] as const) {
      expect(() => analyseSeries(crossing, { order })).toThrow(KineticsError);
      expect(() => analyseSeries(crossing, { order })).toThrow(
        /cannot be analysed with the order fixed at \d/,
      );
    }
    const dataset = analyseDataset([crossing], { order: 1 });
    expect(dataset.series[0]!.error?.message).toMatch(/first-order law .* cannot produce a negative value/);
  });
});
