import { sum as referenceSum } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { accurateDotProduct } from './accurate-dot-product.ts';
import { compensatedMean, compensatedSum } from './compensated-sum.ts';
import { euclideanNorm } from './euclidean-norm.ts';
import { KineticsError } from './kinetics-error.ts';
import { readNistUnivariate, significantDigits } from './nist-strd-reader.ts';

describe('compensatedSum', () => {
  it('recovers terms lost to cancellation (Neumaier 1974 example: 1 + 1e100 + 1 − 1e100 = 2)', () => {
    expect(compensatedSum([1, 1e100, 1, -1e100])).toBe(2);
    expect(compensatedSum([])).toBe(0);
  });
  it('agrees with simple-statistics sum (reference library, also compensated) on ordinary data', () => {
    const values = Array.from({ length: 1000 }, (_, i) => Math.sin(i) * 10 ** (i % 7));
    expect(compensatedSum(values)).toBe(referenceSum(values));
  });
  it('gives the certified means of NIST StRD NumAcc1–4 to ≥ 15 digits (certified exact)', () => {
    // Source: NIST StRD univariate, https://www.itl.nist.gov/div898/strd/univ/univ.shtml;
    // NumAcc4 is 1001 values of 1e7 ± 0.1 with certified mean 10000000.2.
    for (const name of ['NumAcc1', 'NumAcc2', 'NumAcc3', 'NumAcc4']) {
      const { values, certifiedMean } = readNistUnivariate(name);
      expect(significantDigits(compensatedMean(values), certifiedMean)).toBeGreaterThanOrEqual(15);
    }
  });
  it('the mean of an empty list is a too-few-points error', () => {
    expect(() => compensatedMean([])).toThrowError(KineticsError);
  });
});

describe('accurateDotProduct and euclideanNorm', () => {
  it('recovers a product lost to cancellation (Ogita–Rump–Oishi 2005, Dot2)', () => {
    expect(accurateDotProduct([1e16, 1, -1e16], [1, 1, 1])).toBe(1);
    expect(accurateDotProduct([3, 4], [5, 6], -39)).toBe(0);
  });
  it('measures lengths without overflow or underflow (a scaled 3-4-5 triangle; common practice)', () => {
    // Squaring 3e200 directly overflows to Infinity, and squaring 3e-200 underflows to 0.
    expect(significantDigits(euclideanNorm([3e200, 4e200]), 5e200)).toBeGreaterThanOrEqual(15);
    expect(significantDigits(euclideanNorm([3e-200, 4e-200]), 5e-200)).toBeGreaterThanOrEqual(15);
    expect(euclideanNorm([])).toBe(0);
  });
});
