import { describe, expect, it } from 'vitest';
import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import { fitRateLaw, type RateLawFit, type RateLawModel } from '../order/fit-rate-law.ts';
import { generalOrderTime, timeToLevel } from './time-to-level.ts';

function syntheticFit(
  model: RateLawModel,
  c0: number,
  k: number,
  covariance: number[],
  df = 10,
  n?: number,
): RateLawFit {
  const p = model === 'n' ? 3 : 2;
  return {
    model,
    errorModel: 'constant',
    initialValue: c0,
    rateConstant: k,
    n: n ?? (model === 'n' ? 1 : model),
    parameterCount: p,
    covariance,
    standardErrors: Array.from({ length: p }, (_, i) => Math.sqrt(covariance[i * p + i]!)),
    residualSumOfSquares: 1,
    degreesOfFreedom: df,
    residualStandardDeviation: 1,
    pointCount: df + p,
    logLikelihood: 0,
    iterations: 1,
    converged: true,
    atSearchLimit: false,
    reason: 'synthetic',
  };
}

describe('half-life and t90 against published formulas and worked examples', () => {
  it('N2O5 NLS: t½ = 1116 s with 95 % interval [1105, 1127] s by endpoint transform (Eyring & Daniels 1930 N2O5 data (from memory); Fieller 1954 / delta-method intervals)', () => {
    const times = [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144];
    const values = [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34];
    const fit = fitRateLaw(1, times, values, 'constant', { initialValue: 2.3, rateConstant: 6e-4 });
    const half = timeToLevel(fit, { fractionRemaining: 0.5 }, 0.95);
    expect(half.estimate!).toBeCloseTo(1115.6, 0);
    expect(half.ci![0]).toBeCloseTo(1104.8, 0);
    expect(half.ci![1]).toBeCloseTo(1126.6, 0);
  });

  it('first order, k = 0.0050 /month: t90 = 0.105/k ≈ 21 months, t½ ≈ 139 months (jovanaeducation via Bhangare et al. 2022, J. Anal. Sci. Technol., Table 2)', () => {
    const fit = syntheticFit(1, 100, 0.005, [0.25, 0, 0, 0.0005 ** 2]);
    const t90 = timeToLevel(fit, { fractionRemaining: 0.9 }, 0.95);
    expect(t90.estimate!).toBeCloseTo(Math.log(10 / 9) / 0.005, 10);
    expect(Math.round(t90.estimate!)).toBe(21);
    expect(Math.round(timeToLevel(fit, { fractionRemaining: 0.5 }, 0.95).estimate!)).toBe(139);
    // First-order t90 does not depend on C0, so Fieller reduces to the endpoint transform of k's interval.
    const q = studentTQuantile(0.975, 10);
    expect(t90.ci![0]).toBeCloseTo(Math.log(10 / 9) / (0.005 + q * 0.0005), 10);
    expect(t90.ci![1]).toBeCloseTo(Math.log(10 / 9) / (0.005 - q * 0.0005), 10);
  });

  it('zero order: t½ = C0/(2k), t90 = 0.1·C0/k; second order: t½ = 1/(kC0), t90 = 1/(9kC0) (JAST 2022 Table 2 with the Bhangare et al. 2022, J. Anal. Sci. Technol., Table 2, corrected second-order t90 = 1/(9k[A]0))', () => {
    const zero = syntheticFit(0, 100, 2, [0.3, 0.01, 0.01, 0.004]);
    expect(timeToLevel(zero, { fractionRemaining: 0.5 }, 0.95).estimate).toBeCloseTo(25, 12);
    expect(timeToLevel(zero, { fractionRemaining: 0.9 }, 0.95).estimate).toBeCloseTo(5, 12);
    const second = syntheticFit(2, 0.01, 0.5414, [1e-12, 0, 0, 1e-6]);
    expect(timeToLevel(second, { fractionRemaining: 0.5 }, 0.95).estimate).toBeCloseTo(
      1 / (0.5414 * 0.01),
      9,
    );
    // NO2 at 300 °C: t½ = 1/(kC0) = 184 s with the 1/C-plot k = 0.5431 and C0 = 0.01000 M
    // (Brown, LeMay, Bursten, Chemistry: The Central Science, from memory; docs/methods.md#worked-examples).
    const no2 = syntheticFit(2, 0.01, 0.5431, [1e-12, 0, 0, 1e-6]);
    expect(Math.round(timeToLevel(no2, { fractionRemaining: 0.5 }, 0.95).estimate!)).toBe(184);
    expect(timeToLevel(second, { fractionRemaining: 0.9 }, 0.95).estimate).toBeCloseTo(
      1 / (9 * 0.5414 * 0.01),
      9,
    );
  });

  it('general order: t½ = (2^(n−1) − 1)/((n − 1)·k·C0^(n−1)), tending to ln 2/k as n → 1 (integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
    for (const n of [0, 0.5, 1.5, 2, 3]) {
      const expected = (2 ** (n - 1) - 1) / ((n - 1) * 0.01 * 50 ** (n - 1));
      expect(generalOrderTime(50, 0.01, n, { fractionRemaining: 0.5 }) / expected).toBeCloseTo(1, 12);
    }
    expect(generalOrderTime(50, 0.01, 1, { fractionRemaining: 0.5 })).toBeCloseTo(Math.LN2 / 0.01, 12);
    expect(generalOrderTime(50, 0.01, 1 + 1e-9, { fractionRemaining: 0.5 })).toBeCloseTo(Math.LN2 / 0.01, 5);
    // t90 of the general law: ((10/9)^(n−1) − 1)/((n − 1)·k·C0^(n−1)) (by integrating −dC/dt = k·Cⁿ;
    // docs/methods.md#half-life-t90-and-time-to-a-limit).
    const t90 = ((10 / 9) ** 0.7 - 1) / (0.7 * 0.01 * 50 ** 0.7);
    expect(generalOrderTime(50, 0.01, 1.7, { fractionRemaining: 0.9 }) / t90).toBeCloseTo(1, 12);
  });
});

describe('time to a specification limit', () => {
  it('zero order: (C0 − L)/k with Fieller interval; an upper limit on a rising line uses k < 0', () => {
    const falling = syntheticFit(0, 100, 0.5, [0.25, 0.004, 0.004, 0.0025]);
    expect(timeToLevel(falling, { value: 95 }, 0.95).estimate).toBeCloseTo(10, 12);
    const rising = syntheticFit(0, 0.1, -0.02, [0.0004, 0, 0, 0.000004]);
    const upper = timeToLevel(rising, { value: 0.5 }, 0.95);
    expect(upper.estimate).toBeCloseTo(20, 12);
    expect(upper.ci![0]).toBeLessThan(20);
    expect(upper.ci![1]).toBeGreaterThan(20);
  });

  it('first and second order with an absolute limit: ln(C0/L)/k and (1/L − 1/C0)/k (integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
    const first = syntheticFit(1, 100, 0.01, [0.25, 0, 0, 1e-6]);
    expect(timeToLevel(first, { value: 90 }, 0.95).estimate).toBeCloseTo(Math.log(100 / 90) / 0.01, 12);
    const second = syntheticFit(2, 100, 0.0001, [0.25, 0, 0, 1e-10]);
    expect(timeToLevel(second, { value: 90 }, 0.95).estimate).toBeCloseTo((1 / 90 - 1 / 100) / 0.0001, 10);
  });

  it('not estimable when k is not significantly different from 0: interval null with a reason, never a huge number', () => {
    const flat = syntheticFit(0, 100, 0.05, [0.25, 0, 0, 0.01]);
    const result = timeToLevel(flat, { value: 95 }, 0.95);
    expect(result.estimate).toBeCloseTo(100, 10);
    expect(result.ci).toBeNull();
    expect(result.reason).toMatch(/not estimable/);
  });

  it('levels never reached give estimate null with a reason', () => {
    const first = syntheticFit(1, 100, 0.01, [0.25, 0, 0, 1e-6]);
    expect(timeToLevel(first, { value: 0 }, 0.95).estimate).toBeNull();
    expect(timeToLevel(first, { value: 101 }, 0.95).reason).toMatch(/already/);
    expect(timeToLevel(syntheticFit(1, 100, 0, [1, 0, 0, 1]), { value: 90 }, 0.95).reason).toMatch(/zero/);
  });

  it('free order: delta method on ln t, agreeing with first order when n ≈ 1 (N2O5, Eyring & Daniels 1930 N2O5 data (from memory))', () => {
    const times = [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144];
    const values = [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34];
    const fit = fitRateLaw('n', times, values, 'constant', {
      initialValue: 2.33,
      rateConstant: 6.2e-4,
      n: 1,
    });
    const half = timeToLevel(fit, { fractionRemaining: 0.5 }, 0.95);
    expect(half.method).toBe('delta-log');
    expect(Math.abs(half.estimate! / 1116 - 1)).toBeLessThan(0.01);
    expect(half.ci![0]).toBeLessThan(half.estimate!);
    expect(half.ci![1]).toBeGreaterThan(half.estimate!);
  });
});
