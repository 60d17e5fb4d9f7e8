import { describe, expect, it } from 'vitest';
import type { Series } from '../types.ts';
import { type ConditionShelfLifeOptions, conditionShelfLives } from './condition-shelf-lives.ts';
import { type Q1eDeclaration, UNSTATED_DECLARATION } from './q1e-declaration.ts';
import { significantChangeInData } from './significant-change-in-data.ts';

/*
 * Invented stability data of a fictional product ("Pellorine 5 mg tablets", batches PL-…): a chosen
 * straight loss plus fixed hand-written scatter, so each outcome follows from the construction.
 * The allowances are ICH Q1E §2.4–2.5 and Appendix A (numbers from memory; structure as in the
 * ICH Q1E training material); rounding down to a whole month is common practice.
 */
const SCATTER = [0.12, -0.1, 0.08, -0.06, 0.1];
function batch(
  name: string,
  temperatureC: number | null,
  times: number[],
  start: number,
  slope: number,
  shift: number,
  timeUnit = 'month',
): Series {
  return {
    id: temperatureC === null ? name : `${name} @ ${temperatureC} °C`,
    batch: name,
    ...(temperatureC === null ? {} : { temperatureC }),
    timeUnit,
    valueUnit: '% of label claim',
    observations: times.map((time, index) => ({
      time,
      value:
        Math.round((start + slope * time + (SCATTER[(index + shift) % SCATTER.length] ?? 0)) * 100) / 100,
    })),
  };
}
const NINE_MONTHS = [0, 3, 6, 9];
const longTerm = (
  slope = -0.137,
  times = NINE_MONTHS,
  timeUnit = 'month',
  temperatureC: number | null = 25,
) => [
  batch('PL-2501', temperatureC, times, 100.2, slope, 0, timeUnit),
  batch('PL-2502', temperatureC, times, 100.0, slope, 1, timeUnit),
  batch('PL-2503', temperatureC, times, 100.4, slope, 2, timeUnit),
];
const accelerated = (slope: number) => [batch('PL-2501', 40, [0, 1, 2, 3, 6], 100.2, slope, 3)];
const declared = (overrides: Partial<Q1eDeclaration> = {}): Q1eDeclaration => ({
  ...UNSTATED_DECLARATION,
  longTermTemperatureC: 25,
  ...overrides,
});
const run = (series: Series[], declaration: Q1eDeclaration, extra: Partial<ConditionShelfLifeOptions> = {}) =>
  conditionShelfLives(
    series.map((entry) => ({ series: entry, namedOrder: null })),
    { direction: 'decreasing', lowerLimit: 95, confidence: 0.95, declaration, ...extra },
  );
const roomTemperatureStated = declared({
  storage: 'room-temperature',
  acceleratedTemperatureC: 40,
  acceleratedChange: 'none',
  supportingData: 'yes',
});

describe('conditionShelfLives: the proposed shelf life', () => {
  it('9 months of data, estimate 34 months: proposes at most 18, with the branch and the assumption (ICH Q1E Appendix A, §2.4.1.2.2)', () => {
    const [condition] = run([...longTerm(), ...accelerated(-0.5)], roomTemperatureStated);
    const estimate = condition?.result?.shelfLife ?? 0;
    expect(estimate).toBeGreaterThan(33.5);
    expect(estimate).toBeLessThan(34.5);
    const proposal = condition!.proposal;
    // X = 9: up to 2X = 18, not more than X + 12 = 21 → 18.
    expect(proposal.extrapolationLimit.longTermMonths).toBe(9);
    expect(proposal.extrapolationLimit.value).toBe(18);
    expect(proposal.extrapolationLimit.branch).toBe('room-temperature.statistics-and-supporting-data');
    expect(proposal.extrapolationLimit.rule).toBe('up to 2X, not more than X + 12 months');
    expect(proposal.proposedShelfLife).toBe(18);
    expect(proposal.limitedBy).toBe('extrapolation-limit');
    expect(proposal.estimateExceedsLimit).toBe(true);
    expect(proposal.extrapolationLimit.assumptions).toEqual([
      'Little or no change and variability not stated: the data are read as showing change or variability.',
    ]);
    expect(proposal.statement).toMatch(
      /runs past what ICH Q1E allows from 9 months of long-term data: 18 months/,
    );
  });

  it('with nothing declared but the storage temperature: no extrapolation, proposal X = 9 (the most conservative branch)', () => {
    const [condition] = run(longTerm(), declared());
    expect(condition!.proposal.proposedShelfLife).toBe(9);
    expect(condition!.proposal.extrapolationLimit.branch).toBe('storage-not-stated');
    expect(condition!.proposal.extrapolationLimit.assumptions[0]).toMatch(/Storage category/);
  });

  it('the estimate is proposed, rounded down, when it is the smaller (common practice: never rounded up)', () => {
    const [condition] = run(longTerm(-0.35, [0, 3, 6, 9, 12]), roomTemperatureStated);
    const estimate = condition!.result!.shelfLife!;
    expect(estimate).toBeLessThan(24); // X = 12 → allowance 24
    expect(condition!.proposal.proposedShelfLife).toBe(Math.floor(estimate));
    expect(condition!.proposal.limitedBy).toBe('statistical-estimate');
    expect(condition!.proposal.statement).toMatch(
      /lies within what ICH Q1E allows from 12 months .* Proposed: \d+ months, the estimate rounded down/,
    );
  });

  it('times in days: X and the proposal are whole months, given back in days (never above the estimate)', () => {
    const days = NINE_MONTHS.map((month) => month * 30.4375);
    const [condition] = run(longTerm(-0.137 / 30.4375, days, 'd'), roomTemperatureStated);
    expect(condition!.proposal.extrapolationLimit.longTermMonths).toBe(9);
    expect(condition!.proposal.proposedShelfLifeMonths).toBe(18);
    expect(condition!.proposal.proposedShelfLife).toBeCloseTo(18 * 30.4375, 9);
    expect(condition!.proposal.proposedShelfLife!).toBeLessThanOrEqual(
      condition!.proposal.extrapolationLimit.value!,
    );
  });

  it('batches covering different periods: X is the shortest, named as an assumption', () => {
    const series = [...longTerm(-0.137, [0, 3, 6, 9, 12]).slice(0, 2), ...longTerm().slice(2)];
    const [condition] = run(series, roomTemperatureStated);
    expect(condition!.proposal.extrapolationLimit.longTermMonths).toBe(9);
    expect(condition!.proposal.extrapolationLimit.assumptions[0]).toMatch(/9 to 12 months .* shortest/);
  });

  it('no statistical estimate (too few points): no proposal, the allowance still shown on the no-statistics branch', () => {
    const [condition] = run(longTerm(-0.137, [0, 9]), roomTemperatureStated);
    expect(condition!.result).toBeNull();
    expect(condition!.proposal.proposedShelfLife).toBeNull();
    expect(condition!.proposal.proposedReason).toMatch(/no statistical estimate/);
    // ICH Q1E §2.4.1.2.1: supporting data without statistics → up to 1.5X, not more than X + 6.
    expect(condition!.proposal.extrapolationLimit.branch).toBe('room-temperature.supporting-data-only');
    expect(condition!.proposal.extrapolationLimit.value).toBe(13.5);
  });
});

describe('conditionShelfLives: roles and significant change', () => {
  it('the accelerated condition and an undeclared stress condition propose nothing, and say why', () => {
    const series = [...longTerm(), ...accelerated(-0.5), batch('PL-2501', 60, [0, 1, 2, 3], 100.2, -2, 0)];
    const conditions = run(series, roomTemperatureStated);
    expect(conditions.map((condition) => condition.role)).toEqual([
      'long-term',
      'accelerated',
      'not-declared',
    ]);
    const [, hot, stress] = conditions;
    expect(hot!.result?.shelfLife).not.toBeNull(); // the estimate stays, for information
    expect(hot!.proposal.proposedShelfLife).toBeNull();
    expect(hot!.proposal.proposedReason).toMatch(/proposed from long-term data only \(ICH Q1E §2\.3–2\.5/);
    expect(stress!.proposal.proposedReason).toMatch(/60 °C is not declared/);
  });

  it('a significant change the accelerated data show overrides a declaration of none (ICH Q1A(R2) §2.2.7.1)', () => {
    // 40 °C loses 1.2 %/month: 6 months → about 7 % below the initial value.
    const [condition] = run([...longTerm(), ...accelerated(-1.2)], roomTemperatureStated);
    const limit = condition!.proposal.extrapolationLimit;
    expect(limit.findings.join(' ')).toMatch(/PL-2501 @ 40 °C: .* below its initial .*the data prevail/);
    // Significant change at accelerated, intermediate not stated → assumed → ICH Q1E §2.4.2.2: none.
    expect(limit.branch).toBe('room-temperature.accelerated-and-intermediate-change');
    expect(condition!.proposal.proposedShelfLife).toBe(9);
  });

  it('series without a temperature are not taken for long-term data', () => {
    const [condition] = run(longTerm(-0.137, NINE_MONTHS, 'month', null), roomTemperatureStated);
    expect(condition!.role).toBe('not-declared');
    expect(condition!.proposal.proposedReason).toMatch(/carry no storage temperature/);
  });

  it('refrigerated: 25 °C is the accelerated condition, up to 1.5X and X + 6 (ICH Q1E §2.5.1.1)', () => {
    const fridge = declared({
      storage: 'refrigerated',
      longTermTemperatureC: 5,
      acceleratedTemperatureC: 25,
      acceleratedChange: 'none',
      supportingData: 'yes',
    });
    const conditions = run([...longTerm(-0.137, NINE_MONTHS, 'month', 5), ...longTerm(-0.3)], fridge);
    expect(conditions.map((condition) => condition.role)).toEqual(['long-term', 'accelerated']);
    expect(conditions[0]!.proposal.extrapolationLimit.value).toBe(13.5);
    expect(conditions[0]!.proposal.proposedShelfLife).toBe(13);
  });
});

describe('significantChangeInData (ICH Q1A(R2) §2.2.7.1, §2.1.7.1)', () => {
  const options = {
    direction: 'decreasing',
    lowerLimit: 95,
    monthsPerTimeUnit: 1,
    windowMonths: 6,
    conditionLabel: '40 °C',
  } as const;
  const one = (values: number[], times = [0, 3, 6]) => [
    { batch: 'PL-1', observations: times.map((time, i) => ({ time, value: values[i]! })) },
  ];

  it('a 5 % loss from the initial value, and a result outside the criterion, are significant changes', () => {
    const loss = significantChangeInData(one([100, 97, 94.99]), { ...options, lowerLimit: 90 });
    expect(loss.shown).toBe(true);
    expect(loss.firstMonth).toBe(6);
    expect(loss.findings[0]).toMatch(/5\.01 % below its initial 100/);
    const outside = significantChangeInData(one([96, 95.5, 94.8]), options);
    expect(outside.findings[0]).toMatch(/below the lower limit 95/);
  });

  it('a 4.9 % loss within the criterion, or a change after the 6-month window, shows nothing', () => {
    expect(significantChangeInData(one([100, 97, 95.1]), options).shown).toBe(false);
    expect(significantChangeInData(one([100, 99, 90], [0, 3, 9]), options).shown).toBe(false);
  });

  it('an increasing attribute (a degradant) counts only results over its criterion', () => {
    const impurity = { ...options, direction: 'increasing', upperLimit: 0.5 } as const;
    const { lowerLimit: _unused, ...withoutLower } = impurity;
    expect(significantChangeInData(one([0.1, 0.2, 0.3]), withoutLower).shown).toBe(false);
    expect(significantChangeInData(one([0.1, 0.3, 0.6]), withoutLower).findings[0]).toMatch(
      /above the upper limit 0\.5/,
    );
  });
});
