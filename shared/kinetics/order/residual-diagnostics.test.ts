import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { fitRateLaw } from './fit-rate-law.ts';
import { OUTLIER_THRESHOLD, residualDiagnostics } from './residual-diagnostics.ts';

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

  it('a planted outlier is flagged above the threshold and kept (never excluded)', () => {
    const spoiled = [...values];
    spoiled[4] = 82;
    const spoiledFit = fitRateLaw(0, times, spoiled, 'constant', { initialValue: 100, rateConstant: 2 });
    const result = residualDiagnostics(spoiledFit, times, spoiled);
    expect(result.possibleOutliers).toEqual([4]);
    expect(Math.abs(result.points[4]!.externallyStudentised!)).toBeGreaterThan(OUTLIER_THRESHOLD);
    expect(result.points).toHaveLength(8);
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
