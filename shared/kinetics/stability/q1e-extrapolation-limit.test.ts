import { describe, expect, it } from 'vitest';
import { type Q1eExtrapolationCase, q1eExtrapolationLimit } from './q1e-extrapolation-limit.ts';

// All caps: ICH Q1E 2.4–2.5 and Appendix A, numbers from memory; outcome structure
// "12/6/3 month/no extension" confirmed by S. Yoshioka's (MHLW) Q1E training slides
// (docs/methods.md#q1e-extrapolation-limit).
const roomTemperature = (overrides: Partial<Q1eExtrapolationCase>): Q1eExtrapolationCase => ({
  storage: 'room-temperature',
  longTermMonths: 12,
  significantChangeAccelerated: false,
  longTermData: 'statistics-performed',
  supportingData: true,
  ...overrides,
});

describe('q1eExtrapolationLimit', () => {
  it('room temperature, no significant change: up to 2X and ≤ X + 12', () => {
    expect(q1eExtrapolationLimit(roomTemperature({})).maximumShelfLifeMonths).toBe(24);
    expect(q1eExtrapolationLimit(roomTemperature({ longTermMonths: 18 })).maximumShelfLifeMonths).toBe(30);
    expect(q1eExtrapolationLimit(roomTemperature({ longTermMonths: 6 })).maximumShelfLifeMonths).toBe(12);
    expect(
      q1eExtrapolationLimit(roomTemperature({ longTermData: 'little-change' })).maximumShelfLifeMonths,
    ).toBe(24);
  });

  it('room temperature, not analysed statistically: 1.5X and ≤ X + 6 with supporting data, else none', () => {
    expect(
      q1eExtrapolationLimit(roomTemperature({ longTermData: 'no-statistics' })).maximumShelfLifeMonths,
    ).toBe(18);
    expect(
      q1eExtrapolationLimit(roomTemperature({ longTermData: 'no-statistics', longTermMonths: 24 }))
        .maximumShelfLifeMonths,
    ).toBe(30);
    const none = q1eExtrapolationLimit(
      roomTemperature({ longTermData: 'no-statistics', supportingData: false }),
    );
    expect(none.extrapolationAllowed).toBe(false);
    expect(none.maximumShelfLifeMonths).toBe(12);
  });

  it('room temperature, significant change at accelerated only: 1.5X/X + 6 or X + 3', () => {
    const accelerated = { significantChangeAccelerated: true, significantChangeIntermediate: false };
    expect(q1eExtrapolationLimit(roomTemperature(accelerated)).maximumShelfLifeMonths).toBe(18);
    expect(
      q1eExtrapolationLimit(roomTemperature({ ...accelerated, longTermData: 'no-statistics' }))
        .maximumShelfLifeMonths,
    ).toBe(15);
    const both = q1eExtrapolationLimit(
      roomTemperature({ significantChangeAccelerated: true, significantChangeIntermediate: true }),
    );
    expect(both.extrapolationAllowed).toBe(false);
  });

  it('refrigerated and frozen products', () => {
    const fridge = roomTemperature({ storage: 'refrigerated' });
    expect(q1eExtrapolationLimit(fridge).maximumShelfLifeMonths).toBe(18);
    expect(q1eExtrapolationLimit({ ...fridge, longTermMonths: 6 }).maximumShelfLifeMonths).toBe(9);
    expect(q1eExtrapolationLimit({ ...fridge, longTermData: 'no-statistics' }).maximumShelfLifeMonths).toBe(
      15,
    );
    expect(
      q1eExtrapolationLimit({ ...fridge, significantChangeAccelerated: true }).extrapolationAllowed,
    ).toBe(false);
    const freezer = q1eExtrapolationLimit(roomTemperature({ storage: 'freezer' }));
    expect(freezer.extrapolationAllowed).toBe(false);
    expect(freezer.source).toMatch(/from memory/);
  });

  it('rejects an unstated intermediate result and a non-positive X', () => {
    const code = (c: string) => expect.objectContaining({ code: c });
    expect(() => q1eExtrapolationLimit(roomTemperature({ significantChangeAccelerated: true }))).toThrow(
      code('invalid-input'),
    );
    expect(() => q1eExtrapolationLimit(roomTemperature({ longTermMonths: 0 }))).toThrow(
      code('invalid-input'),
    );
  });
});
