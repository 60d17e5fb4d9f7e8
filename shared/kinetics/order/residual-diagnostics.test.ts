import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { bonferroniOutlierCriticalValue } from './bonferroni-outlier-test.ts';
import { fitRateLaw } from './fit-rate-law.ts';
import { residualDiagnostics } from './residual-diagnostics.ts';

// A zero-order law that stays above 0 is a straight line, so its diagnostics must equal the textbook
// ordinary-least-squares ones: hᵢ = 1/n + (tᵢ − t̄)²/Sₜₜ, and the externally studentised residual
// eᵢ/(s₍ᵢ₎·√(1 − hᵢ)) with s₍ᵢ₎ from the fit without point i (Belsley, Kuh & Welsch 1980, from memory).
const times = [0, 1, 2, 3, 4, 5, 6, 7];
const values = [100.2, 98.1, 96.3, 93.8, 92.4, 89.6, 88.3, 85.9];

describe('residualDiagnostics on a straight line (zero order) against OLS formulas and leave-one-out refits', () => {
  const fit = fitRateLaw(0, times, values, 'constant', { initialValue: 100, rateConstant: 2 });
  const diagnostics = residualDiagnostics(fit, times, values);

  it('leverage equals 1/n + (t − t̄)²/Sₜₜ', () => {
    const mean = 3.5;
    const sxx = times.reduce((s, t) => s + (t - mean) ** 2, 0);
    diagnostics.points.forEach((point, i) => {
      expect(point.leverage!).toBeCloseTo(1 / 8 + (times[i]! - mean) ** 2 / sxx, 10);
    });
  });

  it('externally studentised residuals equal eᵢ/(s₍ᵢ₎√(1 − hᵢ)) from simple-statistics refits without point i', () => {
    diagnostics.points.forEach((point, i) => {
      const rest = times.map((t, j) => [t, values[j]!] as [number, number]).filter((_, j) => j !== i);
      const line = linearRegression(rest);
      const rss = rest.reduce((s, [t, v]) => s + (v - line.b - line.m * t) ** 2, 0);
      const sWithout = Math.sqrt(rss / (rest.length - 2));
      const expected = point.residual! / (sWithout * Math.sqrt(1 - point.leverage!));
      expect(point.externallyStudentised!).toBeCloseTo(expected, 8);
    });
  });

  it('a planted outlier is flagged above the Bonferroni critical value of its series and kept (never excluded)', () => {
    const spoiled = [...values];
    spoiled[4] = 82;
    const spoiledFit = fitRateLaw(0, times, spoiled, 'constant', { initialValue: 100, rateConstant: 2 });
    const result = residualDiagnostics(spoiledFit, times, spoiled);
    // 8 points, 2 parameters: t(1 − 0.04/16; 5) = t(0.9975; 5) = 4.773 (t table, upper-tail 0.0025 column;
    // from memory, e.g. Montgomery & Runger, Applied Statistics and Probability for Engineers, Table V).
    expect(result.outlierThreshold).toBe(bonferroniOutlierCriticalValue(8, 2));
    expect(result.outlierThreshold!).toBeCloseTo(4.773, 3);
    expect(result.possibleOutliers).toEqual([4]);
    expect(Math.abs(result.points[4]!.externallyStudentised!)).toBeGreaterThan(result.outlierThreshold!);
    expect(result.points).toHaveLength(8);
  });

  it('the clean line flags nothing, and a residual above 3 but below the critical value is not flagged', () => {
    expect(diagnostics.possibleOutliers).toEqual([]);
    // The old fixed rule flagged |t| > 3; with 8 points the critical value is 4.773, and 91.0 at time 4 gives
    // |t| ≈ 3.4, which the old rule flagged and the Bonferroni rule does not.
    const moderate = [...values];
    moderate[4] = 91.0;
    const moderateFit = fitRateLaw(0, times, moderate, 'constant', { initialValue: 100, rateConstant: 2 });
    const result = residualDiagnostics(moderateFit, times, moderate);
    const largest = Math.max(...result.points.map((point) => Math.abs(point.externallyStudentised ?? 0)));
    expect(largest).toBeGreaterThan(3);
    expect(largest).toBeLessThan(result.outlierThreshold!);
    expect(result.possibleOutliers).toEqual([]);
  });

  it('no test and no flag when N − p − 1 < 1 (three points, two parameters)', () => {
    const short = fitRateLaw(0, [0, 1, 2], [100, 97, 95.5], 'constant', {
      initialValue: 100,
      rateConstant: 2,
    });
    const result = residualDiagnostics(short, [0, 1, 2], [100, 97, 95.5]);
    expect(result.outlierThreshold).toBeNull();
    expect(result.possibleOutliers).toEqual([]);
  });

  it('proportional error reports residuals on the ln scale', () => {
    const positive = fitRateLaw(1, times, values, 'proportional', { initialValue: 100, rateConstant: 0.02 });
    const result = residualDiagnostics(positive, times, values);
    expect(result.residualScale).toBe('ln(value)');
    expect(result.points[0]!.residual!).toBeCloseTo(
      Math.log(values[0]!) - Math.log(result.points[0]!.fitted!),
      12,
    );
  });
});
