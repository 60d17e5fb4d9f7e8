import { linearRegression, rSquared } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { simpleLinearRegression } from '../../../tests/reference/simple-linear-regression.ts';
import type { KineticsError } from '../numeric/kinetics-error.ts';
import { readNistDataset, significantDigits } from '../numeric/nist-strd-reader.ts';
import { transformedStraightLine } from './transformed-straight-line.ts';

describe('transformedStraightLine', () => {
  it('NIST StRD Norris (certified values, https://www.itl.nist.gov/div898/strd/lls/lls.shtml): ≥ 12 digits', () => {
    const norris = readNistDataset('Norris');
    const line = transformedStraightLine(norris.predictors[0]!, norris.y, 'value');
    const [b0, b1] = norris.parameters;
    expect(significantDigits(line.intercept, b0!.estimate)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(line.slope, b1!.estimate)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(line.interceptStandardError, b0!.standardDeviation)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(line.slopeStandardError, b1!.standardDeviation)).toBeGreaterThanOrEqual(12);
  });

  it('matches the numeric core simpleLinearRegression and simple-statistics on ln and 1/value plots', () => {
    const times = [0, 2, 3, 5, 8, 13, 21];
    const values = [98.1, 91.7, 88.9, 82.0, 74.4, 62.0, 47.9];
    for (const [transform, g] of [
      ['ln(value)', Math.log],
      ['1/value', (v: number) => 1 / v],
    ] as const) {
      const transformed = values.map(g);
      const line = transformedStraightLine(times, values, transform);
      const core = simpleLinearRegression(times, transformed);
      expect(line.slope / core.slope).toBeCloseTo(1, 12);
      expect(line.intercept / core.intercept).toBeCloseTo(1, 12);
      expect(line.slopeStandardError / core.slopeStandardError).toBeCloseTo(1, 10);
      expect(line.interceptStandardError / core.interceptStandardError).toBeCloseTo(1, 10);
      const points = times.map((t, i) => [t, transformed[i]!] as [number, number]);
      const reference = linearRegression(points);
      expect(line.slope / reference.m).toBeCloseTo(1, 10);
      expect(line.rSquared).toBeCloseTo(
        rSquared(points, (x) => reference.b + reference.m * x),
        10,
      );
    }
  });

  it('doc example: [0,1,2,3] → [1,3,5,7.5] has slope 2.15, intercept 0.9, R² = 1 − 0.075/23.1875 (by hand)', () => {
    const line = transformedStraightLine([0, 1, 2, 3], [1, 3, 5, 7.5], 'value');
    expect(line.slope).toBeCloseTo(2.15, 12);
    expect(line.intercept).toBeCloseTo(0.9, 12);
    // Residuals 0.1, −0.05, −0.2, 0.15 give RSS 0.075; Σ(y − ȳ)² = 23.1875.
    expect(line.rSquared).toBeCloseTo(1 - 0.075 / 23.1875, 12);
  });

  it('throws too-few-points below 3 points and single-time when all times are equal', () => {
    const code = (action: () => unknown) => {
      try {
        action();
      } catch (error) {
        return (error as KineticsError).code;
      }
      return undefined;
    };
    expect(code(() => transformedStraightLine([0, 1], [1, 2], 'value'))).toBe('too-few-points');
    expect(code(() => transformedStraightLine([2, 2, 2], [1, 2, 3], 'value'))).toBe('single-time');
  });
});
