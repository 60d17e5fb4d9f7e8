import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { q1eShelfLife } from './q1e-shelf-life.ts';
import { lineBatch, MONTHS, referenceLine } from './q1e-test-fixtures.ts';
import type { StabilityBatch } from './stability-batch.ts';

/** The crossing must put the confidence limit on the acceptance limit to this relative accuracy (brief). */
const CROSSING_ACCURACY = 1e-9;
/** "Just before" the crossing: this relative step earlier. */
const JUST_BEFORE = 1e-6;

const valuesOf = (batch: StabilityBatch) => batch.observations.map((o) => o.value);
const timesOf = (batch: StabilityBatch) => batch.observations.map((o) => o.time);

/**
 * Confidence limit of the OLS mean line, written out from the textbook formula
 * ŷ(t) ± t_q·s·√(1/n + (t − x̄)²/Sxx) (NIST/SEMATECH e-Handbook §4.5.2.4; ICH Q1E App. B.1),
 * with simple-statistics for the line and jStat for the Student t quantile.
 */
function referenceLimit(times: number[], values: number[], level: number, side: 1 | -1) {
  const line = referenceLine(times, values);
  const s = Math.sqrt(line.rss / (line.n - 2));
  const q = jStat.studentt.inv(level, line.n - 2);
  return (t: number) =>
    line.intercept +
    line.slope * t -
    side * q * s * Math.sqrt(1 / line.n + (t - line.meanTime) ** 2 / line.sxx);
}

function expectCrossing(limitAt: (t: number) => number, time: number, limit: number, side: 1 | -1) {
  expect(Math.abs(limitAt(time) - limit) / Math.abs(limit)).toBeLessThan(CROSSING_ACCURACY);
  // Just before the returned time the limit is still inside the criterion (no earlier crossing).
  expect(side * (limitAt(time * (1 - JUST_BEFORE)) - limit)).toBeGreaterThan(0);
  for (let t = 0; t < time * (1 - JUST_BEFORE); t += time / 200) {
    expect(side * (limitAt(t) - limit)).toBeGreaterThan(0);
  }
}

describe('q1eShelfLife, single batch', () => {
  const batch = lineBatch('CV-3101', 100.1, -0.15, 0);
  const result = q1eShelfLife([batch], { direction: 'decreasing', lowerLimit: 95, transform: 'none' });

  it('puts the lower one-sided 95 % limit of the mean line on the criterion', () => {
    const limitAt = referenceLimit(timesOf(batch), valuesOf(batch), 0.95, 1);
    expect(result.shelfLife).not.toBeNull();
    expectCrossing(limitAt, result.shelfLife ?? 0, 95, 1);
    expect(result.model).toBe('single-batch');
    expect(result.poolability).toBeNull();
    expect(result.poolabilityNotApplicableReason).toMatch(/single batch/i);
    expect(result.method.sidedness).toBe('one-sided');
    expect(result.status).toBe('crossing');
  });

  it('flags a shelf life beyond the observed data and draws the band up to it', () => {
    expect(result.shelfLife ?? 0).toBeGreaterThan(24);
    expect(result.extrapolation.beyondObservedData).toBe(true);
    const grid = result.lines[0]?.grid ?? [];
    expect(grid.length).toBe(41);
    const last = grid[grid.length - 1];
    expect(last?.time).toBeCloseTo(result.shelfLife ?? 0, 9);
    expect(last?.lowerCL ?? 0).toBeCloseTo(95, 6);
    expect(JSON.parse(JSON.stringify(result))).toEqual(result);
  });
});

describe('q1eShelfLife, doc-comment example', () => {
  it('meets 95 % at 28.73 months for the five-point batch', () => {
    // Independent value: scipy.optimize.brentq on ŷ(t) − t(0.95, 3)·s·√(1/n + (t − x̄)²/Sxx) − 95
    // (numpy polyfit line, scipy.stats.t quantile), computed while writing this test: 28.7305931.
    const batch: StabilityBatch = {
      batch: 'CV-3102',
      observations: [100.1, 99.5, 99.0, 98.6, 98.1].map((value, i) => ({ time: 3 * i, value })),
    };
    const result = q1eShelfLife([batch], { direction: 'decreasing', lowerLimit: 95, transform: 'none' });
    expect(result.shelfLife ?? 0).toBeCloseTo(28.7305931, 6);
  });
});

describe('q1eShelfLife, several batches', () => {
  it('pools similar batches and uses the pooled line', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2102', 100.2, -0.3, 1),
      lineBatch('CV-2103', 100.2, -0.3, 2),
    ];
    const result = q1eShelfLife(batches, { direction: 'decreasing', lowerLimit: 95, transform: 'none' });
    expect(result.model).toBe('pooled');
    expect(result.lines.length).toBe(1);
    const all = batches.flatMap((b) => b.observations);
    const limitAt = referenceLimit(
      all.map((o) => o.time),
      all.map((o) => o.value),
      0.95,
      1,
    );
    expectCrossing(limitAt, result.shelfLife ?? 0, 95, 1);
    expect(result.lines[0]?.degreesOfFreedom).toBe(all.length - 2);
  });

  it('takes the minimum over batches when one slope differs', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2102', 100.2, -0.3, 1),
      lineBatch('CV-2104', 100.2, -0.55, 2),
    ];
    const result = q1eShelfLife(batches, { direction: 'decreasing', lowerLimit: 95, transform: 'none' });
    expect(result.model).toBe('separate');
    const individual = batches.map(
      (b) => q1eShelfLife([b], { direction: 'decreasing', lowerLimit: 95, transform: 'none' }).shelfLife ?? 0,
    );
    expect(result.shelfLife).toBeCloseTo(Math.min(...individual), 9);
    expect(result.limitingLine).toBe('CV-2104');
    const fast = batches[2]!;
    expectCrossing(referenceLimit(timesOf(fast), valuesOf(fast), 0.95, 1), result.shelfLife ?? 0, 95, 1);
    const pooledVariance = q1eShelfLife(batches, {
      direction: 'decreasing',
      lowerLimit: 95,
      transform: 'none',
      separateBatchVariance: 'pooled',
    });
    expect(pooledVariance.lines[0]?.degreesOfFreedom).toBe(21 - 6);
  });

  it('evaluates each batch on the common-slope model with the ANCOVA limit', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2105', 99.2, -0.3, 1),
      lineBatch('CV-2106', 101.0, -0.3, 2),
    ];
    const result = q1eShelfLife(batches, { direction: 'decreasing', lowerLimit: 95, transform: 'none' });
    expect(result.model).toBe('common-slope');
    expect(result.limitingLine).toBe('CV-2105');
    // ANCOVA with a common slope (Snedecor & Cochran, analysis of covariance): slope Σ Sxy / Σ Sxx,
    // Var ŷ_b(t) = s²·(1/n_b + (t − x̄_b)²/Σ Sxx), s² = RSS/(N − B − 1).
    const stats = batches.map((b) => {
      const t = timesOf(b);
      const y = valuesOf(b);
      const line = referenceLine(t, y);
      const meanY = y.reduce((s, v) => s + v, 0) / y.length;
      return {
        ...line,
        meanY,
        sxy: t.reduce((s, ti, i) => s + (ti - line.meanTime) * ((y[i] ?? 0) - meanY), 0),
      };
    });
    const sxx = stats.reduce((s, b) => s + b.sxx, 0);
    const slope = stats.reduce((s, b) => s + b.sxy, 0) / sxx;
    const rss = batches.reduce(
      (s, b, k) =>
        s +
        valuesOf(b).reduce(
          (r, v, i) =>
            r +
            (v - ((stats[k]?.meanY ?? 0) + slope * ((timesOf(b)[i] ?? 0) - (stats[k]?.meanTime ?? 0)))) ** 2,
          0,
        ),
      0,
    );
    const sd = Math.sqrt(rss / (21 - 3 - 1));
    const q = jStat.studentt.inv(0.95, 21 - 3 - 1);
    const worst = stats[1]!;
    const limitAt = (t: number) =>
      worst.meanY +
      slope * (t - worst.meanTime) -
      q * sd * Math.sqrt(1 / worst.n + (t - worst.meanTime) ** 2 / sxx);
    expectCrossing(limitAt, result.shelfLife ?? 0, 95, 1);
  });
});

describe('q1eShelfLife, direction and scale', () => {
  it('uses the upper one-sided limit for an increasing impurity', () => {
    const impurity: StabilityBatch = {
      batch: 'CV-4101',
      observations: MONTHS.map((time, i) => ({
        time,
        value: 0.05 + 0.018 * time + [0.01, -0.008, 0.012, -0.01, 0.004, 0.009, -0.011][i]!,
      })),
    };
    const result = q1eShelfLife([impurity], { direction: 'increasing', upperLimit: 0.5, transform: 'none' });
    expectCrossing(
      referenceLimit(timesOf(impurity), valuesOf(impurity), 0.95, -1),
      result.shelfLife ?? 0,
      0.5,
      -1,
    );
    expect(result.lines[0]?.crossings[0]?.acceptanceLimit).toBe('upper');
  });

  it('uses two-sided limits (97.5 % each side) when the attribute may move either way', () => {
    const ph: StabilityBatch = {
      batch: 'CV-5101',
      observations: MONTHS.map((time, i) => ({
        time,
        value: 6.9 + 0.012 * time + [0.03, -0.02, 0.04, -0.03, 0.01, 0.02, -0.03][i]!,
      })),
    };
    const result = q1eShelfLife([ph], {
      direction: 'either',
      lowerLimit: 6.5,
      upperLimit: 7.5,
      transform: 'none',
    });
    expect(result.method.sidedness).toBe('two-sided');
    expect(result.method.quantileLevel).toBeCloseTo(0.975, 12);
    expect(result.lines[0]?.crossings.length).toBe(2);
    // The upward drift meets the upper criterion first.
    expectCrossing(referenceLimit(timesOf(ph), valuesOf(ph), 0.975, -1), result.shelfLife ?? 0, 7.5, -1);
    const lower = result.lines[0]?.crossings.find((c) => c.acceptanceLimit === 'lower');
    expect(lower?.time ?? Number.POSITIVE_INFINITY).toBeGreaterThan(result.shelfLife ?? 0);
  });

  it('regresses ln(value) for first order and transforms the limit the same way', () => {
    const batch: StabilityBatch = {
      batch: 'CV-6101',
      observations: MONTHS.map((time, i) => ({
        time,
        value: 100.3 * Math.exp(-0.004 * time) * (1 + [1, -2, 1.5, -0.5, -1, 2, -1][i]! / 1000),
      })),
    };
    const result = q1eShelfLife([batch], { direction: 'decreasing', lowerLimit: 90, transform: 'ln' });
    const limitAt = referenceLimit(timesOf(batch), valuesOf(batch).map(Math.log), 0.95, 1);
    expectCrossing(limitAt, result.shelfLife ?? 0, Math.log(90), 1);
    const grid = result.lines[0]?.grid ?? [];
    expect(grid[grid.length - 1]?.lowerCL ?? 0).toBeCloseTo(90, 6);
    expect(result.method.notes.join(' ')).toMatch(/geometric/);
  });

  it('regresses 1/value for second order, where a lower limit becomes an upper one', () => {
    const batch: StabilityBatch = {
      batch: 'CV-7101',
      observations: MONTHS.map((time, i) => ({
        time,
        value: 1 / (0.00995 + 0.000012 * time) + [0.1, -0.15, 0.12, -0.05, -0.1, 0.14, -0.08][i]!,
      })),
    };
    const result = q1eShelfLife([batch], { direction: 'decreasing', lowerLimit: 90, transform: '1/x' });
    const reciprocal = valuesOf(batch).map((v) => 1 / v);
    const upperOfReciprocal = referenceLimit(timesOf(batch), reciprocal, 0.95, -1);
    expectCrossing(upperOfReciprocal, result.shelfLife ?? 0, 1 / 90, -1);
    expect(result.lines[0]?.crossings[0]?.acceptanceLimit).toBe('lower');
    expect(result.method.notes.join(' ')).toMatch(/reversed/);
    const grid = result.lines[0]?.grid ?? [];
    expect(grid[grid.length - 1]?.lowerCL ?? 0).toBeCloseTo(90, 6);
  });
});

describe('q1eShelfLife, no crossing, extrapolation and degenerate cases', () => {
  it('says "no crossing within N" instead of a huge number', () => {
    const flat = lineBatch('CV-8101', 100, 0, 0);
    const result = q1eShelfLife([flat], {
      direction: 'decreasing',
      lowerLimit: 80,
      transform: 'none',
      horizon: 36,
    });
    expect(result.shelfLife).toBeNull();
    expect(result.status).toBe('no-crossing-within-horizon');
    expect(result.reason).toMatch(/No crossing within 36/);
    expect(result.extrapolation.beyondObservedData).toBeNull();
    expect(JSON.parse(JSON.stringify(result))).toEqual(result);
  });

  it('reports failure at time 0 when the limit is already met', () => {
    const batch = lineBatch('CV-8102', 96, -0.2, 1);
    const result = q1eShelfLife([batch], { direction: 'decreasing', lowerLimit: 97, transform: 'none' });
    expect(result.status).toBe('fails-at-start');
    expect(result.shelfLife).toBe(0);
  });

  it('throws typed errors for degenerate input', () => {
    const code = (c: string) => expect.objectContaining({ code: c });
    const ok = lineBatch('CV-9101', 100, -0.3, 0);
    const base = { direction: 'decreasing', transform: 'none' } as const;
    expect(() => q1eShelfLife([ok], base)).toThrow(code('invalid-input'));
    expect(() => q1eShelfLife([ok], { direction: 'increasing', transform: 'none', lowerLimit: 1 })).toThrow(
      code('invalid-input'),
    );
    expect(() => q1eShelfLife([], { ...base, lowerLimit: 95 })).toThrow(code('too-few-points'));
    const short = {
      batch: 'CV-9102',
      observations: [
        { time: 0, value: 100 },
        { time: 3, value: 99 },
      ],
    };
    expect(() => q1eShelfLife([short], { ...base, lowerLimit: 95 })).toThrow(code('too-few-points'));
    expect(() => q1eShelfLife([ok], { ...base, lowerLimit: 0, transform: 'ln' })).toThrow(
      code('non-positive-value'),
    );
    expect(() => q1eShelfLife([ok], { ...base, lowerLimit: 95, horizon: -1 })).toThrow(code('invalid-input'));
    expect(() => q1eShelfLife([ok], { ...base, lowerLimit: 95, confidence: 1.5 })).toThrow(
      code('invalid-input'),
    );
    expect(() =>
      q1eShelfLife([ok], { direction: 'either', transform: 'none', lowerLimit: 105, upperLimit: 95 }),
    ).toThrow(code('invalid-input'));
  });
});
