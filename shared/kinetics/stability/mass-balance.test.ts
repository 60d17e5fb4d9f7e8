import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import type { Series } from '../types.ts';
import { massBalance } from './mass-balance.ts';
import type { StudyAttribute } from './study-attributes.ts';

function attribute(name: string, extra: Partial<StudyAttribute>): StudyAttribute {
  return {
    name,
    unit: '%',
    direction: 'increasing',
    lowerLimit: null,
    upperLimit: 0.5,
    workingOrder: null,
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: 'degradant',
    ...extra,
  };
}

const ASSAY = attribute('Assay', {
  direction: 'decreasing',
  lowerLimit: 95,
  upperLimit: null,
  massBalanceRole: 'assay',
});
const IMPURITY_A = attribute('Impurity A', {});
const IMPURITY_B = attribute('Impurity B', {});
const WATER = attribute('Water', { massBalanceRole: null });
const ATTRIBUTES = [ASSAY, IMPURITY_A, IMPURITY_B, WATER];

function series(
  name: string | undefined,
  batch: string,
  temperatureC: number,
  points: [number, number][],
): Series {
  return {
    id: `${name ?? 'Assay'} · ${batch} @ ${temperatureC} °C`,
    ...(name === undefined ? {} : { attribute: name }),
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit: '%',
    observations: points.map(([time, value]) => ({ time, value })),
  };
}

/**
 * Invented: batch B1 at 25 °C, assay 100, 99, 98, 97 at months 0, 3, 6, 9; Impurity A 0, 0.5,
 * 1.2, 1.7; Impurity B 0, 0.4, 0.9, 1.2 — totals 100, 99.9, 100.1, 99.9. The assay series carries
 * no attribute (it measures the study's first attribute), as in datasets of one attribute.
 */
function dataset(): Series[] {
  return [
    series(undefined, 'B1', 25, [
      [0, 100],
      [3, 99],
      [6, 98],
      [9, 97],
    ]),
    series('Impurity A', 'B1', 25, [
      [0, 0],
      [3, 0.5],
      [6, 1.2],
      [9, 1.7],
    ]),
    series('Impurity B', 'B1', 25, [
      [0, 0],
      [3, 0.4],
      [6, 0.9],
      [9, 1.2],
    ]),
    series('Water', 'B1', 25, [
      [0, 2],
      [3, 2.1],
      [6, 2.2],
      [9, 2.3],
    ]),
  ];
}

describe('massBalance (ICH Q1A(R2) glossary: assay plus degradation products against the initial value)', () => {
  it('adds assay and degradants at each common pull and gives the slope with its t interval', () => {
    const result = massBalance(dataset(), ATTRIBUTES)!;
    expect(result.assayAttribute).toBe('Assay');
    expect(result.degradantAttributes).toEqual(['Impurity A', 'Impurity B']);
    expect(result.unit).toBe('%');
    expect(result.timeUnit).toBe('month');
    expect(result.series).toHaveLength(1);
    const [b1] = result.series;
    expect(b1!.batch).toBe('B1');
    expect(b1!.temperatureC).toBe(25);
    expect(b1!.points.map((point) => point.time)).toEqual([0, 3, 6, 9]);
    const degradants = b1!.points.map((point) => point.degradants);
    for (const [i, expected] of [0, 0.9, 2.1, 2.9].entries()) expect(degradants[i]).toBeCloseTo(expected, 12);
    expect(b1!.points.map((point) => point.assay)).toEqual([100, 99, 98, 97]);
    const percent = b1!.points.map((point) => point.percentOfInitial);
    for (const [i, expected] of [100, 99.9, 100.1, 99.9].entries())
      expect(percent[i]).toBeCloseTo(expected, 12);

    // Slope checked against simple-statistics' linearRegression (an independent least squares).
    const reference = linearRegression(b1!.points.map((point) => [point.time, point.percentOfInitial]));
    expect(b1!.trend!.slope).toBeCloseTo(reference.m, 12);
    // By hand: t̄ = 4.5, Sₜₜ = 45, Sₜy = −0.15 → slope −1/300; residuals 0.01, −0.08, 0.13, −0.06,
    // RSS = 0.027, s² = 0.0135, se = √(0.0135/45) = 0.017320508; t(0.975; 2) = 4.303 (Student-t
    // table, NIST/SEMATECH e-Handbook §1.3.6.7.2; the further digits 4.302652730 from memory) →
    // half-width 0.0745241.
    expect(b1!.trend!.slope).toBeCloseTo(-1 / 300, 12);
    const half = 4.30265273 * Math.sqrt(0.0135 / 45);
    expect(b1!.trend!.lower).toBeCloseTo(-1 / 300 - half, 6);
    expect(b1!.trend!.upper).toBeCloseTo(-1 / 300 + half, 6);
    expect(b1!.trend!.confidenceLevel).toBe(0.95);
    expect(result.statement).toMatch(
      /^Mass balance: Assay plus Impurity A, Impurity B \(%\), per batch and condition at the pulls where all were measured/,
    );
    expect(result.statement).toContain(
      'B1 at 25 °C: 99.9 % of initial at 9 months, slope -0.003333 % per month (95 % CI -0.07786 to 0.07119)',
    );
  });

  it('uses the run’s confidence level', () => {
    const result = massBalance(dataset(), ATTRIBUTES, 0.9)!;
    const half = 2.91998558 * Math.sqrt(0.0135 / 45); // t(0.95; 2) = 2.920 in the same table (further digits from memory)
    expect(result.series[0]!.trend!.upper).toBeCloseTo(-1 / 300 + half, 6);
    expect(result.series[0]!.trend!.confidenceLevel).toBe(0.9);
  });

  it('counts a censored degradant at 0 under "exclude" and at the stated value otherwise, and says so', () => {
    const data = dataset();
    data[1]!.observations[0] = { time: 0, value: 0.05, censored: { text: '<0.05', limit: 0.05 } };
    const excluded = massBalance(data, ATTRIBUTES)!;
    expect(excluded.series[0]!.points[0]!.degradants).toBe(0);
    expect(excluded.statement).toContain("Impurity A's results below the limit count as 0");
    const stated = massBalance(data, [
      ASSAY,
      { ...IMPURITY_A, censoredRule: 'stated-value', censoredValue: 0.025 },
      IMPURITY_B,
    ])!;
    expect(stated.series[0]!.points[0]!.degradants).toBe(0.025);
    expect(stated.series[0]!.points[0]!.total).toBe(100.025);
    expect(stated.statement).toContain(
      "Impurity A's results below the limit count at the stated value 0.025 %",
    );
  });

  it('leaves out points the analyst excluded (the pull then lacks them) and averages replicates', () => {
    const data = dataset();
    data[2]!.observations[1]!.excluded = { reason: 'integration error at 3 months' };
    data[0]!.observations.push({ time: 6, value: 98.4 });
    const result = massBalance(data, ATTRIBUTES)!;
    const points = result.series[0]!.points;
    expect(points.map((point) => point.time)).toEqual([0, 6, 9]);
    expect(points[1]!.assay).toBeCloseTo(98.2, 12);
    expect(result.series[0]!.trend).not.toBeNull();
  });

  it('pairs series by batch and condition, and names a batch without every degradant', () => {
    const data = [
      ...dataset(),
      series(undefined, 'B1', 40, [
        [0, 100],
        [1, 99],
        [2, 98],
      ]),
      series('Impurity A', 'B1', 40, [
        [0, 0],
        [1, 0.9],
        [2, 1.8],
      ]),
      series(undefined, 'B2', 25, [
        [0, 100],
        [3, 99.5],
      ]),
      series('Impurity A', 'B2', 25, [
        [0, 0],
        [3, 0.4],
      ]),
      series('Impurity B', 'B2', 25, [
        [0, 0],
        [3, 0.1],
      ]),
    ];
    const result = massBalance(data, ATTRIBUTES)!;
    expect(result.series.map((entry) => [entry.batch, entry.temperatureC])).toEqual([
      ['B1', 25],
      ['B2', 25],
    ]);
    // Two pulls give no trend.
    expect(result.series[1]!.trend).toBeNull();
    expect(result.statement).toContain(
      'B2 at 25 °C: 100 % of initial at 3 months, no trend (fewer than 3 pulls)',
    );
    expect(result.statement).toContain('Not checked: B1 at 40 °C (Impurity B not measured).');
  });

  it('is not asked for without an assay or a degradant, and refused with the reason when it cannot be made', () => {
    expect(massBalance(dataset(), [ASSAY, WATER])).toBeNull();
    expect(massBalance(dataset(), [{ ...ASSAY, massBalanceRole: null }, IMPURITY_A])).toBeNull();
    const units = massBalance(dataset(), [ASSAY, { ...IMPURITY_A, unit: 'mg' }])!;
    expect(units.series).toEqual([]);
    expect(units.statement).toBe(
      'Mass balance not checked: Impurity A is in mg and Assay in %; a mass balance adds them, so they must share a unit.',
    );
    const two = massBalance(dataset(), [ASSAY, { ...WATER, massBalanceRole: 'assay' }, IMPURITY_A])!;
    expect(two.statement).toBe(
      'Mass balance not checked: Assay, Water are all marked as the assay; mark one.',
    );
  });
});
