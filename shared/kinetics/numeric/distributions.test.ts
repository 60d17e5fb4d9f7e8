import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { fDistributionUpperTail } from './f-distribution-upper-tail.ts';
import { KineticsError } from './kinetics-error.ts';
import { studentTQuantile } from './student-t-quantile.ts';

/** Table entries are printed to 3 decimals, so agreement within half a unit of the last place. */
const TABLE_ROUNDING = 0.0005 + 1e-9;

describe('studentTQuantile', () => {
  // Source: NIST/SEMATECH e-Handbook of Statistical Methods §1.3.6.7.2 "Critical values of the
  // Student's t distribution" (upper-tail probabilities 0.10, 0.05, 0.025, 0.01, 0.005, 0.001,
  // i.e. p = 0.90 … 0.999). Values from memory of that table, cross-checked for consistency
  // with jStat below. The ν = 1, p = 0.999 cell is omitted (remembered as 318.313 in the
  // table, which differs from the true 318.309 in the last digits).
  const probabilities = [0.9, 0.95, 0.975, 0.99, 0.995, 0.999];
  const table: Record<number, number[]> = {
    1: [3.078, 6.314, 12.706, 31.821, 63.657],
    2: [1.886, 2.92, 4.303, 6.965, 9.925, 22.327],
    5: [1.476, 2.015, 2.571, 3.365, 4.032, 5.893],
    10: [1.372, 1.812, 2.228, 2.764, 3.169, 4.144],
    30: [1.31, 1.697, 2.042, 2.457, 2.75, 3.385],
    100: [1.29, 1.66, 1.984, 2.364, 2.626, 3.174],
  };
  for (const [degreesOfFreedom, row] of Object.entries(table)) {
    it(`matches the NIST table for ${degreesOfFreedom} degrees of freedom`, () => {
      row.forEach((expected, column) => {
        const p = probabilities[column]!;
        expect(Math.abs(studentTQuantile(p, Number(degreesOfFreedom)) - expected)).toBeLessThanOrEqual(
          TABLE_ROUNDING,
        );
        // Symmetry: the lower quantile is the negative of the upper one (common practice).
        expect(studentTQuantile(1 - p, Number(degreesOfFreedom))).toBeCloseTo(-expected, 3);
      });
    });
  }
  it('is the inverse of jStat studentt.cdf (reference library) to the accuracy jStat provides (about 8 digits)', () => {
    for (const degreesOfFreedom of [1, 3, 7.5, 24, 500]) {
      for (const p of [0.6, 0.9, 0.975, 0.9995]) {
        const t = studentTQuantile(p, degreesOfFreedom);
        expect(Math.abs(jStat.studentt.cdf(t, degreesOfFreedom) - p) / (1 - p)).toBeLessThan(1e-6);
      }
    }
  });
  it('rejects p outside (0, 1) and non-positive degrees of freedom', () => {
    for (const [p, df] of [
      [0, 5],
      [1, 5],
      [Number.NaN, 5],
      [0.5, 0],
      [0.5, -2],
      [0.5, Number.POSITIVE_INFINITY],
    ] as const) {
      expect(() => studentTQuantile(p, df)).toThrowError(KineticsError);
      try {
        studentTQuantile(p, df);
      } catch (error) {
        expect((error as KineticsError).code).toBe('invalid-input');
      }
    }
  });
});

describe('fDistributionUpperTail', () => {
  it('gives 0.05 at the tabled 95 % points (NIST e-Handbook §1.3.6.7.3, from memory)', () => {
    // F(0.05; 1, 10) = 4.965 and F(0.05; 5, 10) = 3.326 in the table.
    expect(fDistributionUpperTail(4.965, 1, 10)).toBeCloseTo(0.05, 4);
    expect(fDistributionUpperTail(3.326, 5, 10)).toBeCloseTo(0.05, 4);
    expect(fDistributionUpperTail(0, 2, 3)).toBe(1);
    expect(fDistributionUpperTail(Number.POSITIVE_INFINITY, 2, 3)).toBe(0);
  });
  it('agrees with one minus jStat centralF.cdf (reference library)', () => {
    for (const f of [0.3, 1, 2.7, 8]) {
      expect(fDistributionUpperTail(f, 3, 14)).toBeCloseTo(1 - jStat.centralF.cdf(f, 3, 14), 7);
    }
  });
  it('keeps tiny p-values relative-accurate instead of rounding them to 0', () => {
    const p = fDistributionUpperTail(5436385.54079785, 1, 34); // NIST Norris ANOVA F statistic
    expect(p).toBeGreaterThan(0);
    expect(p).toBeLessThan(1e-60);
  });
  it('rejects a negative statistic and bad degrees of freedom', () => {
    expect(() => fDistributionUpperTail(-1, 2, 3)).toThrowError(KineticsError);
    expect(() => fDistributionUpperTail(1, 0, 3)).toThrowError(KineticsError);
  });
});
