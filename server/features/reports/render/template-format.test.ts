import { describe, expect, it } from 'vitest';
import {
  interval,
  isoDateTime,
  isoDay,
  NOT_ESTIMABLE_TEXT,
  percent,
  significant,
  TemplateValueError,
} from './template-format.ts';

describe('significant (the sig helper)', () => {
  it('rounds as Number.prototype.toPrecision does and writes × 10ⁿ for small numbers', () => {
    // Reference: ECMA-262 §21.1.3.5 toPrecision for the digits; NIST SP 811 (2008) §10.5.3 for "× 10ⁿ".
    expect(significant(0.00062134, 3, '1/s')).toBe('6.21 × 10⁻⁴ 1/s');
    expect(Number(significant(1116.2, 4))).toBe(Number((1116.2).toPrecision(4)));
    expect(significant(98.765, 3, '% label claim')).toBe(`${(98.765).toPrecision(3)} % label claim`);
  });

  it('never prints "-0", "NaN" or "Infinity"', () => {
    expect(significant(-0, 2)).toBe('0.0');
    expect(significant(Number.NaN, 3)).toBe(NOT_ESTIMABLE_TEXT);
    expect(significant(Number.POSITIVE_INFINITY, 3)).toBe(NOT_ESTIMABLE_TEXT);
    expect(significant(null, 3, 'month')).toBe('not estimable');
    expect(significant(undefined, 3)).toBe('not estimable');
  });

  it('keeps a true minus sign for negative values (NIST SP 811 §10.5.1, common practice)', () => {
    expect(significant(-2.5, 3)).toBe('−2.50');
  });

  it('refuses a digit count outside 1–15 and text in place of a number', () => {
    expect(() => significant(1, 0)).toThrow(TemplateValueError);
    expect(() => significant(1, 2.5)).toThrow(/whole number/);
    expect(() => significant('12', 3)).toThrow(/expected a number/);
  });
});

describe('interval', () => {
  it('prints both ends to the same figures with the unit once', () => {
    expect(interval([6.152e-4, 6.274e-4], 3, '1/s')).toBe('6.15 × 10⁻⁴ to 6.27 × 10⁻⁴ 1/s');
    expect(interval([-0, 1.5], 2)).toBe('0.0 to 1.5');
  });
  it('says "not estimable" for a missing interval or end', () => {
    expect(interval(null, 3)).toBe(NOT_ESTIMABLE_TEXT);
    expect(interval([1, Number.NaN], 3)).toBe(NOT_ESTIMABLE_TEXT);
    expect(() => interval([1], 3)).toThrow(/pair/);
  });
});

describe('percent', () => {
  it('writes a fraction as a percentage without a negative zero', () => {
    expect(percent(0.1234, 1)).toBe('12.3 %');
    expect(percent(0.95, 0)).toBe('95 %');
    expect(percent(-0.00001, 1)).toBe('0.0 %');
    expect(percent(null)).toBe(NOT_ESTIMABLE_TEXT);
  });
});

describe('isoDateTime and isoDay', () => {
  const instant = new Date('2026-12-01T14:05:00Z');
  it('writes ISO 8601 with the offset of the IANA zone (ISO 8601-1:2019 §5.4.2)', () => {
    expect(isoDateTime(instant, 'UTC')).toBe('2026-12-01T14:05:00+00:00');
    // Central European Time is UTC+1 in winter, UTC+2 in summer (Directive 2000/84/EC; IANA tz database).
    expect(isoDateTime(instant, 'Europe/Berlin')).toBe('2026-12-01T15:05:00+01:00');
    expect(isoDateTime(new Date('2026-07-01T12:00:00Z'), 'Europe/Berlin')).toBe('2026-07-01T14:00:00+02:00');
    // US Eastern daylight time is UTC−4 (15 U.S.C. §260a; IANA tz database); India is UTC+5:30 all year.
    expect(isoDateTime(new Date('2026-07-01T12:00:00Z'), 'America/New_York')).toBe(
      '2026-07-01T08:00:00-04:00',
    );
    expect(isoDateTime(instant, 'Asia/Kolkata')).toBe('2026-12-01T19:35:00+05:30');
  });
  it('gives the calendar day in the zone, which can differ from the UTC day', () => {
    expect(isoDay(new Date('2026-12-01T23:30:00Z'), 'Asia/Tokyo')).toBe('2026-12-02');
    expect(isoDay('2026-12-01T23:30:00Z', 'UTC')).toBe('2026-12-01');
  });
  it('refuses an unknown zone and a non-date', () => {
    expect(() => isoDateTime(instant, 'Mars/Olympus')).toThrow(/IANA/);
    expect(() => isoDateTime('not a date', 'UTC')).toThrow(/expected a date/);
    expect(isoDateTime(null, 'UTC')).toBe(NOT_ESTIMABLE_TEXT);
  });
});
