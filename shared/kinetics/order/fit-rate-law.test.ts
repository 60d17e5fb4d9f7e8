import { describe, expect, it } from 'vitest';
import { KineticsError } from '../numeric/kinetics-error.ts';
import { levenbergMarquardt } from '../numeric/levenberg-marquardt.ts';
import { fitRateLaw, ORDER_SEARCH_RANGE } from './fit-rate-law.ts';

// N2O5 in CCl4 at 45 °C (Eyring & Daniels, JACS 52 (1930) 1473, via physical-chemistry texts; from memory).
const n2o5 = {
  times: [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144],
  values: [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34],
};
// NO2 → NO + ½O2 at 300 °C (Brown, LeMay, Bursten, Chemistry: The Central Science, from memory).
const no2 = { times: [0, 50, 100, 200, 300], values: [0.01, 0.00787, 0.00649, 0.00481, 0.0038] };

const relative = (value: number, reference: number) => Math.abs(value / reference - 1);

const codeOf = (action: () => unknown): string | undefined => {
  try {
    action();
  } catch (error) {
    return error instanceof KineticsError ? error.code : 'not a KineticsError';
  }
  return undefined;
};

describe('fitRateLaw against published worked examples', () => {
  it('N2O5 first-order NLS: k = 6.213e-4 /s (se 2.57e-6), C0 = 2.328 (Eyring & Daniels 1930 N2O5 data (from memory), NLS values computed with scipy)', () => {
    const fit = fitRateLaw(1, n2o5.times, n2o5.values, 'constant', { initialValue: 2.3, rateConstant: 6e-4 });
    expect(fit.converged).toBe(true);
    expect(relative(fit.rateConstant, 6.213e-4)).toBeLessThan(5e-4);
    expect(relative(fit.standardErrors![1]!, 2.57e-6)).toBeLessThan(5e-3);
    expect(relative(fit.initialValue, 2.328)).toBeLessThan(5e-4);
    // Published textbook value k ≈ 6.2e-4 /s (Laidler & Meiser; Atkins; from memory).
    expect(fit.rateConstant).toBeCloseTo(6.2e-4, 5);
  });

  it('NO2 second-order NLS: k = 0.5414 M⁻¹s⁻¹ (se 0.0011), C0 = 0.01000 M (Brown et al., Chemistry: The Central Science, NO2 sample exercise (from memory)); textbook k = 0.543 (from memory)', () => {
    const fit = fitRateLaw(2, no2.times, no2.values, 'constant', { initialValue: 0.01, rateConstant: 0.5 });
    expect(relative(fit.rateConstant, 0.5414)).toBeLessThan(5e-4);
    expect(relative(fit.standardErrors![1]!, 0.0011)).toBeLessThan(0.05);
    expect(relative(fit.initialValue, 0.01)).toBeLessThan(5e-4);
    expect(Math.abs(fit.rateConstant - 0.543)).toBeLessThan(0.003);
  });
});

describe('fitRateLaw against the same solver on independently written laws (numeric core, MINPACK lmder port)', () => {
  // The reference: the laws written out here, in (C0, k, n), with a central-difference Jacobian — no code
  // shared with fitRateLaw's model, derivatives or free-order parametrisation. Measured agreement (engine
  // 0.2.0): RSS to 6e-14, parameters to 6e-12, standard errors to 1e-9 (the free order's, limited by the
  // differenced Jacobian); engine 0.1.0 reached only 7e-7 in the parameters.
  it('gives the same parameters and standard errors for orders 0, 1, 2 and the free order on N2O5', () => {
    const laws = {
      0: (p: readonly number[], t: number) => Math.max(0, p[0]! - p[1]! * t),
      1: (p: readonly number[], t: number) => p[0]! * Math.exp(-p[1]! * t),
      2: (p: readonly number[], t: number) => p[0]! / (1 + p[1]! * p[0]! * t),
      n: (p: readonly number[], t: number) =>
        (p[0]! ** (1 - p[2]!) + (p[2]! - 1) * p[1]! * t) ** (1 / (1 - p[2]!)),
    };
    const starts = { 0: [2.1, 6e-4], 1: [2.3, 6e-4], 2: [2.4, 4e-4], n: [2.33, 6.2e-4, 1.1] };
    for (const model of [0, 1, 2, 'n'] as const) {
      const start = starts[model];
      const ours = fitRateLaw(model, n2o5.times, n2o5.values, 'constant', {
        initialValue: start[0]!,
        rateConstant: start[1]!,
        ...(model === 'n' ? { n: start[2]! } : {}),
      });
      const reference = levenbergMarquardt({
        model: laws[model],
        x: n2o5.times,
        y: n2o5.values,
        initial: start,
      });
      expect(reference.converged).toBe(true);
      expect(relative(ours.residualSumOfSquares, reference.residualSumOfSquares)).toBeLessThan(1e-12);
      reference.parameters.forEach((value, index) => {
        const mine = [ours.initialValue, ours.rateConstant, ours.n][index]!;
        expect(relative(mine, value)).toBeLessThan(1e-10);
        expect(relative(ours.standardErrors![index]!, reference.standardErrors[index]!)).toBeLessThan(1e-8);
      });
    }
  });
});

describe('fitRateLaw error models and the free order', () => {
  it('proportional error fits ln C: on exact first-order data it returns the exact law and the log-scale likelihood', () => {
    const times = [0, 1, 2, 3, 4];
    const values = times.map((t) => 100 * Math.exp(-0.3 * t) * (1 + 0.01 * Math.sin(7 * t)));
    const fit = fitRateLaw(1, times, values, 'proportional', { initialValue: 90, rateConstant: 0.2 });
    // For order 1 the log-scale fit is the straight line ln C = ln C0 − k t (OpenStax Chemistry 2e §12.4).
    const logs = values.map(Math.log);
    const meanT = 2;
    const meanL = logs.reduce((a, b) => a + b) / 5;
    const slope = times.reduce((s, t, i) => s + (t - meanT) * (logs[i]! - meanL), 0) / 10;
    const intercept = meanL - slope * meanT;
    // The fit converges to the optimum to rounding (measured: within 4e-14 and 3e-13 standard errors).
    expect(Math.abs(fit.rateConstant + slope)).toBeLessThan(1e-10 * fit.standardErrors![1]!);
    expect(Math.abs(Math.log(fit.initialValue) - intercept)).toBeLessThan(
      1e-10 * (fit.standardErrors![0]! / fit.initialValue),
    );
    // Log-likelihood on the original scale: −N/2·(ln(2π·RSS/N) + 1) − Σ ln y (lognormal density).
    const rss = logs.reduce((s, l, i) => s + (l - intercept - slope * times[i]!) ** 2, 0);
    const expected = -2.5 * (Math.log((2 * Math.PI * rss) / 5) + 1) - logs.reduce((a, b) => a + b);
    expect(fit.logLikelihood).toBeCloseTo(expected, 6);
  });

  it('recovers n = 1.5 from noise-free order-1.5 data (the law of integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
    const times = Array.from({ length: 10 }, (_, i) => i * 2);
    const values = times.map((t) => (100 ** -0.5 + 0.5 * 0.004 * t) ** -2);
    const fit = fitRateLaw('n', times, values, 'constant', { initialValue: 95, rateConstant: 0.04, n: 1 });
    expect(fit.n).toBeCloseTo(1.5, 6);
    expect(fit.rateConstant).toBeCloseTo(0.004, 8);
    expect(fit.converged).toBe(true);
  });

  it('stops at the search limit, and says so, when the data cannot determine n', () => {
    const times = [0, 1, 2, 3, 4, 5];
    const values = [100, 99.5, 99.4, 98.2, 98.4, 97.1];
    const fit = fitRateLaw('n', times, values, 'constant', { initialValue: 100, rateConstant: 0.005, n: 1 });
    if (fit.atSearchLimit) {
      expect([ORDER_SEARCH_RANGE[0], ORDER_SEARCH_RANGE[1]]).toContain(fit.n);
      expect(fit.reason).toMatch(/do not determine the order/);
    } else {
      expect(fit.n).toBeGreaterThan(ORDER_SEARCH_RANGE[0]);
      expect(fit.n).toBeLessThan(ORDER_SEARCH_RANGE[1]);
    }
    expect(Number.isFinite(fit.residualSumOfSquares)).toBe(true);
  });
});

describe('fitRateLaw degenerate cases', () => {
  it('too few points for the parameters: KineticsError too-few-points', () => {
    expect(
      codeOf(() => fitRateLaw(1, [0, 1], [10, 5], 'constant', { initialValue: 10, rateConstant: 1 })),
    ).toBe('too-few-points');
    expect(
      codeOf(() =>
        fitRateLaw('n', [0, 1, 2], [10, 5, 2], 'constant', { initialValue: 10, rateConstant: 1, n: 1 }),
      ),
    ).toBe('too-few-points');
  });

  it('proportional error with a non-positive value: KineticsError non-positive-value', () => {
    expect(
      codeOf(() =>
        fitRateLaw(0, [0, 1, 2], [10, 5, 0], 'proportional', { initialValue: 10, rateConstant: 5 }),
      ),
    ).toBe('non-positive-value');
  });

  it('an infeasible start (a second-order rise past its singularity) is repaired by shrinking k', () => {
    const fit = fitRateLaw(2, [0, 1, 2, 3], [10, 11, 12.5, 14], 'constant', {
      initialValue: 10,
      rateConstant: -1,
    });
    expect(Number.isFinite(fit.residualSumOfSquares)).toBe(true);
    expect(fit.rateConstant).toBeLessThan(0);
  });
});
