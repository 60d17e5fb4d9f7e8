import { describe, expect, it } from 'vitest';
import { formatInterval, formatPercent, formatSignificant, NOT_ESTIMABLE } from './significant-figures.ts';

describe('formatSignificant', () => {
  it('rounds to significant figures as Number.prototype.toPrecision does (ECMA-262 §21.1.3.5)', () => {
    // Reference: the ECMAScript toPrecision algorithm, which rounds half away from zero on the
    // decimal expansion of the double; in the plain range our text must carry the same digits.
    for (const [value, digits] of [
      [1116.2, 4],
      [98.765, 3],
      [0.012345, 3],
      [6.5, 1],
      [123456.7, 4],
    ] as const) {
      const reference = Number(value.toPrecision(digits));
      expect(Number(formatSignificant(value, digits))).toBe(reference);
    }
  });

  it('keeps trailing zeros that state precision (NIST SP 811 §7.9, common practice)', () => {
    expect(formatSignificant(100, 4)).toBe('100.0');
    expect(formatSignificant(99.996, 4)).toBe('100.0');
    expect(formatSignificant(0, 3)).toBe('0.00');
  });

  it('writes very small and very large numbers as × 10ⁿ (NIST SP 811 §10.5.3)', () => {
    expect(formatSignificant(0.00062134, 3)).toBe('6.21 × 10⁻⁴');
    expect(formatSignificant(2.5e7, 2)).toBe('2.5 × 10⁷');
    expect(formatSignificant(0.001, 2)).toBe('0.0010');
  });

  it('uses a true minus sign', () => {
    expect(formatSignificant(-2.5, 3)).toBe('−2.50');
    expect(formatSignificant(-0.000012, 2)).toBe('−1.2 × 10⁻⁵');
  });

  it('writes a dash for what is not estimable, never NaN', () => {
    expect(formatSignificant(null)).toBe(NOT_ESTIMABLE);
    expect(formatSignificant(undefined)).toBe(NOT_ESTIMABLE);
    expect(formatSignificant(Number.NaN)).toBe(NOT_ESTIMABLE);
    expect(formatSignificant(Number.POSITIVE_INFINITY)).toBe(NOT_ESTIMABLE);
  });
});

describe('formatInterval and formatPercent', () => {
  it('writes both bounds at the same precision', () => {
    expect(formatInterval([6.152e-4, 6.274e-4], 3)).toBe('6.15 × 10⁻⁴ to 6.27 × 10⁻⁴');
    expect(formatInterval(null)).toBe(NOT_ESTIMABLE);
  });
  it('writes fractions as percentages', () => {
    expect(formatPercent(0.1234)).toBe('12.3 %');
    expect(formatPercent(null)).toBe(NOT_ESTIMABLE);
  });
});
