import { describe, expect, it } from 'vitest';
import { initialRateLawAt, prepareRateLaw, rateLawAt, rateLawValue } from './integrated-rate-law.ts';

// Closed forms of the integrated laws: OpenStax Chemistry 2e §12.4 "Integrated Rate Laws"; the n-th-order
// law (Atkins; Laidler, from memory) checked by derivation. Convention −dC/dt = k·Cⁿ.
const closedForm = {
  zero: (c0: number, k: number, t: number) => Math.max(0, c0 - k * t),
  first: (c0: number, k: number, t: number) => c0 * Math.exp(-k * t),
  second: (c0: number, k: number, t: number) => c0 / (1 + k * c0 * t),
  general: (c0: number, k: number, n: number, t: number) =>
    (c0 ** (1 - n) + (n - 1) * k * t) ** (1 / (1 - n)),
};

describe('rateLawValue against the closed forms of integrated rate laws, OpenStax Chemistry 2e §12.4', () => {
  it('orders 0, 1, 2 (fast paths) and the general law at n = 0, 2, 0.5, 1.5, 2.7 agree to 1e-12', () => {
    for (const t of [0, 0.5, 3, 10]) {
      expect(rateLawValue(0, 100, 4, 0, t, null)).toBeCloseTo(closedForm.zero(100, 4, t), 12);
      expect(rateLawValue(1, 100, 0.1, 1, t, null)).toBeCloseTo(closedForm.first(100, 0.1, t), 12);
      expect(rateLawValue(2, 100, 0.001, 2, t, null)).toBeCloseTo(closedForm.second(100, 0.001, t), 12);
      expect(rateLawValue('n', 100, 4, 0, t, null) / closedForm.zero(100, 4, t)).toBeCloseTo(1, 12);
      expect(rateLawValue('n', 100, 0.001, 2, t, null) / closedForm.second(100, 0.001, t)).toBeCloseTo(1, 12);
      for (const n of [0.5, 1.5, 2.7]) {
        const k = 0.01;
        expect(rateLawValue('n', 100, k, n, t, null) / closedForm.general(100, k, n, t)).toBeCloseTo(1, 12);
      }
    }
  });

  it('the general law tends to first order as n → 1 without losing digits (L’Hôpital limit, integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
    for (const n of [1, 1 + 1e-9, 1 - 1e-9, 1 + 1e-6]) {
      const value = rateLawValue('n', 100, 0.1, n, 10, null);
      expect(Math.abs(value / closedForm.first(100, 0.1, 10) - 1)).toBeLessThan(Math.abs(n - 1) * 10 + 1e-14);
    }
  });

  it('zero order reaches 0 at t = C0/k and stays there; order 0.5 likewise at C0^(1−n)/((1−n)k) (Peleg, integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
    expect(rateLawValue(0, 100, 10, 0, 10, null)).toBe(0);
    expect(rateLawValue(0, 100, 10, 0, 25, null)).toBe(0);
    const end = 100 ** 0.5 / (0.5 * 1);
    expect(rateLawValue('n', 100, 1, 0.5, end * 0.999, null)).toBeGreaterThan(0);
    expect(rateLawValue('n', 100, 1, 0.5, end * 1.001, null)).toBe(0);
  });

  it('a rising second-order curve past its singularity is infeasible (NaN), never a number', () => {
    expect(Number.isNaN(rateLawValue(2, 100, -0.001, 2, 20, null))).toBe(true);
    expect(Number.isNaN(rateLawValue('n', 100, -0.001, 2, 20, null))).toBe(true);
    expect(Number.isNaN(rateLawValue('n', -1, 0.001, 1.5, 1, null))).toBe(true);
  });
});

describe('analytic derivatives against central differences (common practice)', () => {
  const numeric = (f: (h: number) => number, h: number) => (f(h) - f(-h)) / (2 * h);
  it('∂C/∂C0, ∂C/∂k and ∂C/∂n of every law, including n near 1', () => {
    const gradient = new Float64Array(3);
    for (const [model, n] of [
      [0, 0],
      [1, 1],
      [2, 2],
      ['n', 0.4],
      ['n', 1],
      ['n', 1 + 1e-7],
      ['n', 2.3],
    ] as const) {
      const c0 = 80;
      const k =
        model === 2 || (model === 'n' && n > 1.5)
          ? 0.002
          : model === 0 || (model === 'n' && n < 0.5)
            ? 2
            : 0.05;
      const t = 7;
      const value = rateLawAt(prepareRateLaw(model, c0, k, n), t, gradient);
      expect(value).toBeGreaterThan(0);
      const at = (a: number, b: number, c: number) => rateLawValue(model, a, b, c, t, null);
      const d0 = numeric((h) => at(c0 + h, k, n), 1e-5 * c0);
      const d1 = numeric((h) => at(c0, k + h, n), 1e-5 * k);
      expect(gradient[0]! / d0).toBeCloseTo(1, 6);
      expect(gradient[1]! / d1).toBeCloseTo(1, 6);
      if (model === 'n') {
        const d2 = numeric((h) => at(c0, k, n + h), 1e-5);
        expect(gradient[2]! / d2).toBeCloseTo(1, 5);
      }
    }
  });

  it('the initial-rate form equals the (C0, k, n) form with r0 = k·C0ⁿ, and its derivatives match differences', () => {
    const gradient = new Float64Array(3);
    for (const n of [0, 0.6, 1, 1.4, 2]) {
      const c0 = 50;
      const k = 0.01 * c0 ** (1 - n);
      const r0 = k * c0 ** n;
      const t = 12;
      const value = initialRateLawAt(c0, r0, n, t, gradient);
      expect(value / rateLawValue('n', c0, k, n, t, null)).toBeCloseTo(1, 12);
      const at = (a: number, b: number, c: number) => initialRateLawAt(a, b, c, t, null);
      expect(gradient[0]! / numeric((h) => at(c0 + h, r0, n), 1e-5 * c0)).toBeCloseTo(1, 6);
      expect(gradient[1]! / numeric((h) => at(c0, r0 + h, n), 1e-5 * r0)).toBeCloseTo(1, 6);
      expect(gradient[2]! / numeric((h) => at(c0, r0, n + h), 1e-5)).toBeCloseTo(1, 5);
    }
  });
});
