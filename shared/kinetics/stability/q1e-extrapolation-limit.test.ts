import { describe, expect, it } from 'vitest';
import { type Q1eExtrapolationCase, q1eExtrapolationLimit } from './q1e-extrapolation-limit.ts';

// Every allowance: ICH Q1E (2003) §2.4–2.5 and the Appendix A decision tree; the numbers from
// memory, the outcome structure "12 / 6 / 3 months / no extrapolation" as in the ICH Q1E training
// material (docs/methods.md#q1e-extrapolation-limit).
const stated = (overrides: Partial<Q1eExtrapolationCase> = {}): Q1eExtrapolationCase => ({
  storage: 'room-temperature',
  longTermMonths: 12,
  acceleratedChange: 'none',
  intermediateChange: 'none',
  littleChange: 'no',
  statisticsPerformed: true,
  supportingData: 'yes',
  ...overrides,
});
const limit = (overrides: Partial<Q1eExtrapolationCase> = {}) => q1eExtrapolationLimit(stated(overrides));

describe('q1eExtrapolationLimit: room temperature, no significant change at accelerated', () => {
  it('little change and variability: up to 2X, not more than X + 12 (ICH Q1E §2.4.1.1)', () => {
    const result = limit({ littleChange: 'yes', statisticsPerformed: false, supportingData: 'no' });
    expect(result.branch).toBe('room-temperature.little-change');
    expect(result.section).toBe('ICH Q1E §2.4.1.1');
    expect(result.maximumShelfLifeMonths).toBe(24);
    expect(result.assumptions).toEqual([]);
  });

  it('statistics and supporting data: 2X and X + 12, the stricter of the two (ICH Q1E §2.4.1.2.2)', () => {
    expect(limit().maximumShelfLifeMonths).toBe(24); // 2X = 24 = X + 12
    expect(limit({ longTermMonths: 18 }).maximumShelfLifeMonths).toBe(30); // X + 12 < 2X
    expect(limit({ longTermMonths: 9 }).maximumShelfLifeMonths).toBe(18); // 2X < X + 12 (Appendix A)
    expect(limit().branch).toBe('room-temperature.statistics-and-supporting-data');
    expect(limit().rule).toBe('up to 2X, not more than X + 12 months');
  });

  it('supporting data without statistics: up to 1.5X, not more than X + 6 (ICH Q1E §2.4.1.2.1)', () => {
    const result = limit({ statisticsPerformed: false });
    expect(result.maximumShelfLifeMonths).toBe(18);
    expect(limit({ statisticsPerformed: false, longTermMonths: 24 }).maximumShelfLifeMonths).toBe(30);
    expect(result.branch).toBe('room-temperature.supporting-data-only');
  });

  it('no supporting data: none, since §2.4.1.2 grants the extension only backed by them (conservative reading)', () => {
    for (const statisticsPerformed of [true, false]) {
      const result = limit({ supportingData: 'no', statisticsPerformed });
      expect(result.extrapolationAllowed).toBe(false);
      expect(result.maximumShelfLifeMonths).toBe(12);
      expect(result.branch).toBe('room-temperature.no-supporting-data');
    }
  });
});

describe('q1eExtrapolationLimit: room temperature, significant change at accelerated', () => {
  const accelerated = { acceleratedChange: 'significant' } as const;

  it('none at intermediate, little change: up to 1.5X, not more than X + 6 (ICH Q1E §2.4.2.1.1)', () => {
    const result = limit({ ...accelerated, littleChange: 'yes', supportingData: 'no' });
    expect(result.maximumShelfLifeMonths).toBe(18);
    expect(result.section).toBe('ICH Q1E §2.4.2.1.1');
  });

  it('none at intermediate: 1.5X / X + 6 with statistics, X + 3 with supporting data only (ICH Q1E §2.4.2.1.2)', () => {
    expect(limit(accelerated).maximumShelfLifeMonths).toBe(18);
    expect(limit({ ...accelerated, longTermMonths: 24 }).maximumShelfLifeMonths).toBe(30);
    const only = limit({ ...accelerated, statisticsPerformed: false });
    expect(only.maximumShelfLifeMonths).toBe(15);
    expect(only.multipleOfLongTerm).toBeNull();
    expect(only.rule).toBe('not more than X + 3 months');
    expect(limit({ ...accelerated, supportingData: 'no' }).extrapolationAllowed).toBe(false);
  });

  it('significant change at intermediate too: no extrapolation (ICH Q1E §2.4.2.2)', () => {
    const result = limit({ ...accelerated, intermediateChange: 'significant', littleChange: 'yes' });
    expect(result.extrapolationAllowed).toBe(false);
    expect(result.maximumShelfLifeMonths).toBe(12);
    expect(result.branch).toBe('room-temperature.accelerated-and-intermediate-change');
    expect(result.notes.join(' ')).toMatch(/shorter than the period covered/);
  });
});

describe('q1eExtrapolationLimit: below room temperature', () => {
  const fridge = { storage: 'refrigerated' } as const;

  it('refrigerated, no significant change at 25 °C: 1.5X / X + 6, or X + 3 with supporting data only (ICH Q1E §2.5.1.1)', () => {
    expect(limit({ ...fridge, littleChange: 'yes', supportingData: 'no' }).maximumShelfLifeMonths).toBe(18);
    expect(limit(fridge).maximumShelfLifeMonths).toBe(18);
    expect(limit({ ...fridge, longTermMonths: 6 }).maximumShelfLifeMonths).toBe(9);
    expect(limit({ ...fridge, statisticsPerformed: false }).maximumShelfLifeMonths).toBe(15);
    expect(limit({ ...fridge, supportingData: 'no' }).extrapolationAllowed).toBe(false);
  });

  it('refrigerated, significant change at accelerated: none, with the excursion note (ICH Q1E §2.5.1.2)', () => {
    const early = limit({
      ...fridge,
      acceleratedChange: 'significant',
      acceleratedChangeWithinThreeMonths: true,
    });
    expect(early.extrapolationAllowed).toBe(false);
    expect(early.section).toBe('ICH Q1E §2.5.1.2');
    expect(early.notes.join(' ')).toMatch(/short-term excursions/);
    const late = limit({
      ...fridge,
      acceleratedChange: 'significant',
      acceleratedChangeWithinThreeMonths: false,
    });
    expect(late.notes.join(' ')).not.toMatch(/short-term excursions/);
  });

  it('frozen: no extrapolation, excursions by a single batch at a higher temperature (ICH Q1E §2.5.2, §2.5.3)', () => {
    const frozen = limit({ storage: 'frozen', littleChange: 'yes' });
    expect(frozen.extrapolationAllowed).toBe(false);
    expect(frozen.branch).toBe('frozen');
    expect(frozen.notes.join(' ')).toMatch(/single batch/);
    expect(limit({ storage: 'frozen', longTermTemperatureC: -70 }).notes.join(' ')).toMatch(/case by case/);
  });
});

describe('q1eExtrapolationLimit: what nobody states', () => {
  it('takes the most conservative branch and names each assumption it consulted (common practice)', () => {
    const unknown = limit({
      acceleratedChange: 'unknown',
      intermediateChange: 'unknown',
      littleChange: 'unknown',
      supportingData: 'unknown',
    });
    // Significant change assumed at accelerated and at intermediate → ICH Q1E §2.4.2.2: none.
    expect(unknown.extrapolationAllowed).toBe(false);
    expect(unknown.branch).toBe('room-temperature.accelerated-and-intermediate-change');
    expect(unknown.assumptions).toHaveLength(2);
    expect(unknown.assumptions[0]).toMatch(/accelerated condition not stated: taken as having occurred/);
    expect(unknown.path).toContain('significant change at the intermediate condition (assumed)');
  });

  it('an unknown answer never allows more than any stated one', () => {
    const answers = {
      acceleratedChange: ['none', 'significant'],
      intermediateChange: ['none', 'significant'],
      littleChange: ['yes', 'no'],
      supportingData: ['yes', 'no'],
    } as const;
    for (const storage of ['room-temperature', 'refrigerated'] as const) {
      for (const [field, values] of Object.entries(answers)) {
        const unknown = limit({ storage, [field]: 'unknown' }).maximumShelfLifeMonths;
        const least = Math.min(
          ...values.map((value) => limit({ storage, [field]: value }).maximumShelfLifeMonths),
        );
        expect(unknown, `${storage} ${field}`).toBeLessThanOrEqual(least);
      }
    }
  });

  it('an unstated storage category allows no extrapolation (as ICH Q1E §2.5.2 for frozen products)', () => {
    const result = limit({ storage: 'unknown', littleChange: 'yes' });
    expect(result.extrapolationAllowed).toBe(false);
    expect(result.branch).toBe('storage-not-stated');
    expect(result.assumptions[0]).toMatch(/Storage category .* not stated/);
  });

  it('rejects a period X that is not positive', () => {
    expect(() => limit({ longTermMonths: 0 })).toThrow(expect.objectContaining({ code: 'invalid-input' }));
    expect(() => limit({ longTermMonths: Number.NaN })).toThrow(
      expect.objectContaining({ code: 'invalid-input' }),
    );
  });
});
