import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import { readNistDataset, significantDigits } from '../../shared/kinetics/numeric/nist-strd-reader.ts';
import { studentTQuantile } from '../../shared/kinetics/numeric/student-t-quantile.ts';
import { predictOnLine } from './predict-on-line.ts';
import { simpleLinearRegression } from './simple-linear-regression.ts';

const codeOf = (action: () => unknown): string | undefined => {
  try {
    action();
  } catch (error) {
    return error instanceof KineticsError ? error.code : 'not a KineticsError';
  }
  return undefined;
};

describe('simpleLinearRegression against NIST StRD (certified values, https://www.itl.nist.gov/div898/strd/lls/lls.shtml)', () => {
  it('Norris: intercept, slope, their standard deviations, residual SD and R² to ≥ 12 digits', () => {
    const norris = readNistDataset('Norris');
    const fit = simpleLinearRegression(norris.predictors[0]!, norris.y);
    const [b0, b1] = norris.parameters;
    expect(significantDigits(fit.intercept, b0!.estimate)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(fit.slope, b1!.estimate)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(fit.interceptStandardError, b0!.standardDeviation)).toBeGreaterThanOrEqual(12);
    expect(significantDigits(fit.slopeStandardError, b1!.standardDeviation)).toBeGreaterThanOrEqual(12);
    expect(
      significantDigits(fit.residualStandardDeviation, norris.residualStandardDeviation),
    ).toBeGreaterThanOrEqual(12);
    expect(significantDigits(fit.residualSumOfSquares, norris.residualSumOfSquares)).toBeGreaterThanOrEqual(
      12,
    );
    expect(significantDigits(fit.rSquared, norris.rSquared!)).toBeGreaterThanOrEqual(12);
    expect(fit.degreesOfFreedom).toBe(34);
  });
  for (const name of ['NoInt1', 'NoInt2']) {
    it(`${name} through the origin: slope, its SD, residual SD and uncentred R² to ≥ 12 digits`, () => {
      const dataset = readNistDataset(name);
      const fit = simpleLinearRegression(dataset.predictors[0]!, dataset.y, { throughOrigin: true });
      const [b1] = dataset.parameters;
      expect(fit.intercept).toBe(0);
      expect(significantDigits(fit.slope, b1!.estimate)).toBeGreaterThanOrEqual(12);
      expect(significantDigits(fit.slopeStandardError, b1!.standardDeviation)).toBeGreaterThanOrEqual(12);
      expect(
        significantDigits(fit.residualStandardDeviation, dataset.residualStandardDeviation),
      ).toBeGreaterThanOrEqual(12);
      expect(significantDigits(fit.rSquared, dataset.rSquared!)).toBeGreaterThanOrEqual(12);
      expect(fit.degreesOfFreedom).toBe(dataset.degreesOfFreedom);
    });
  }
  it('agrees with simple-statistics linearRegression (reference library) on Norris', () => {
    const norris = readNistDataset('Norris');
    const points = norris.predictors[0]!.map((x, i) => [x, norris.y[i]!]);
    const reference = linearRegression(points);
    const fit = simpleLinearRegression(norris.predictors[0]!, norris.y);
    expect(significantDigits(fit.slope, reference.m)).toBeGreaterThanOrEqual(10);
    expect(significantDigits(fit.intercept, reference.b)).toBeGreaterThanOrEqual(8);
  });
});

describe('simpleLinearRegression numerics', () => {
  it('fits 100 000 points far from the origin exactly and fast (centring; common practice)', () => {
    // y = 3 + 2·(x − 1e9) for x = 1e9 … 1e9 + 99 999: every number is an exact integer in double.
    const x = Array.from({ length: 100_000 }, (_, i) => 1e9 + i);
    const y = x.map((value) => 3 + 2 * (value - 1e9));
    const started = performance.now();
    const fit = simpleLinearRegression(x, y);
    const elapsed = performance.now() - started;
    expect(fit.slope).toBe(2);
    expect(fit.residualSumOfSquares).toBe(0);
    expect(significantDigits(fit.intercept, 3 - 2e9)).toBeGreaterThanOrEqual(14);
    expect(elapsed).toBeLessThan(1000);
  });
  it('with weights equals replicating points (weight 2 = the point twice; common practice)', () => {
    const x = [0, 1, 2, 3, 4];
    const y = [10.1, 9.4, 9.1, 8.2, 7.9];
    const weighted = simpleLinearRegression(x, y, { weights: [1, 2, 1, 1, 1] });
    const replicated = simpleLinearRegression([0, 1, 1, 2, 3, 4], [10.1, 9.4, 9.4, 9.1, 8.2, 7.9]);
    expect(weighted.slope).toBeCloseTo(replicated.slope, 13);
    expect(weighted.intercept).toBeCloseTo(replicated.intercept, 13);
    expect(weighted.residualSumOfSquares).toBeCloseTo(replicated.residualSumOfSquares, 13);
  });
});

describe('simpleLinearRegression degenerate cases', () => {
  it('all x equal → single-time', () => {
    expect(codeOf(() => simpleLinearRegression([2, 2, 2, 2], [1, 2, 3, 4]))).toBe('single-time');
  });
  it('all x zero through the origin → single-time; all x equal but non-zero is fine through the origin', () => {
    expect(codeOf(() => simpleLinearRegression([0, 0, 0], [1, 2, 3], { throughOrigin: true }))).toBe(
      'single-time',
    );
    expect(simpleLinearRegression([2, 2, 2], [4, 4.2, 3.8], { throughOrigin: true }).slope).toBeCloseTo(
      2,
      14,
    );
  });
  it('n < 3 → too-few-points (n < 2 through the origin)', () => {
    expect(codeOf(() => simpleLinearRegression([0, 1], [1, 2]))).toBe('too-few-points');
    expect(codeOf(() => simpleLinearRegression([1], [2], { throughOrigin: true }))).toBe('too-few-points');
    expect(simpleLinearRegression([1, 2], [2, 4.1], { throughOrigin: true }).degreesOfFreedom).toBe(1);
  });
  it('NaN, Infinity, length mismatch, bad weights → invalid-input', () => {
    expect(codeOf(() => simpleLinearRegression([0, 1, Number.NaN], [1, 2, 3]))).toBe('invalid-input');
    expect(codeOf(() => simpleLinearRegression([0, 1, 2], [1, Number.NEGATIVE_INFINITY, 3]))).toBe(
      'invalid-input',
    );
    expect(codeOf(() => simpleLinearRegression([0, 1, 2], [1, 2]))).toBe('invalid-input');
    expect(codeOf(() => simpleLinearRegression([0, 1, 2], [1, 2, 3], { weights: [1, -1, 1] }))).toBe(
      'invalid-input',
    );
  });
  it('a constant response gives slope 0, R² = 1 and zero errors, not NaN', () => {
    const fit = simpleLinearRegression([0, 1, 2, 3], [5, 5, 5, 5]);
    expect(fit.slope).toBe(0);
    expect(fit.rSquared).toBe(1);
    expect(fit.slopeStandardError).toBe(0);
  });
});

describe('predictOnLine', () => {
  const norris = readNistDataset('Norris');
  const fit = simpleLinearRegression(norris.predictors[0]!, norris.y);
  it('at x = 0 the confidence half-width is t(0.975, 34) × the certified intercept SD (NIST Norris; NIST e-Handbook §4.5.2.1)', () => {
    const prediction = predictOnLine(fit, 0, 0.95);
    const halfWidth = (prediction.confidenceInterval[1] - prediction.confidenceInterval[0]) / 2;
    // t(0.975, 34) = 2.032 in the NIST e-Handbook §1.3.6.7.2 table (from memory).
    expect(Math.abs(prediction.tQuantile - 2.032)).toBeLessThanOrEqual(0.0005 + 1e-9);
    expect(significantDigits(prediction.estimate, norris.parameters[0]!.estimate)).toBeGreaterThanOrEqual(12);
    expect(
      significantDigits(halfWidth / prediction.tQuantile, norris.parameters[0]!.standardDeviation),
    ).toBeGreaterThanOrEqual(12);
  });
  it('at the mean of x the prediction SE is s·√(1 + 1/n) (NIST e-Handbook §4.5.2.2)', () => {
    const prediction = predictOnLine(fit, fit.meanX, 0.95);
    const halfWidth = (prediction.predictionInterval[1] - prediction.predictionInterval[0]) / 2;
    const expected = norris.residualStandardDeviation * Math.sqrt(1 + 1 / 36) * studentTQuantile(0.975, 34);
    expect(significantDigits(halfWidth, expected)).toBeGreaterThanOrEqual(12);
  });
  it('one-sided limits use the t quantile at the confidence itself (ICH Q1E one-sided 95 %; common practice)', () => {
    const twoSided = predictOnLine(fit, 300, 0.9);
    const oneSided = predictOnLine(fit, 300, 0.95, { sides: 'one-sided' });
    expect(oneSided.confidenceInterval[0]).toBeCloseTo(twoSided.confidenceInterval[0], 12);
  });
  it('rejects a confidence outside (0, 1) and a non-finite x', () => {
    expect(codeOf(() => predictOnLine(fit, 1, 1))).toBe('invalid-input');
    expect(codeOf(() => predictOnLine(fit, Number.NaN, 0.95))).toBe('invalid-input');
  });
});
