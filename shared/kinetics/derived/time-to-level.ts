import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import type { RateLawFit } from '../order/fit-rate-law.ts';
import { fiellerRatioInterval } from './fieller-ratio-interval.ts';

/**
 * The time at which a fitted rate law reaches a level — a fraction of its initial value (half-life:
 * 0.5; t90: 0.9) or an absolute value (a specification limit) — with a confidence interval.
 *
 * Convention −dC/dt = k·Cⁿ. Formula in words, with r = ln(C0/L) for the level L:
 * - order 0: t = (C0 − L)/k; order 1: t = ln(C0/L)/k; order 2: t = (1/L − 1/C0)/k;
 *   for a fraction p of C0 these are (1 − p)·C0/k, ln(1/p)/k (t½ = ln 2/k, t90 = ln(10/9)/k) and
 *   (1/p − 1)/(C0·k) (t½ = 1/(k·C0), t90 = 1/(9·k·C0)) — OpenStax Chemistry 2e §12.4; Bhangare et al.,
 *   J. Anal. Sci. Technol. (2022), doi 10.1186/s40543-022-00317-6, Table 2, whose second-order t90
 *   "(0.11/k)[A]₀" is corrected here to 1/(9·k·C0) (from 1/(0.9·C0) − 1/C0 = k·t);
 * - general n (m = n − 1): t = C0^(−m)·(e^(m·r) − 1)/(m·k), which tends to r/k as n → 1
 *   (t½ = (2^(n−1) − 1)/((n − 1)·k·C0^(n−1)), by integrating −dC/dt = k·Cⁿ; Atkins, Physical Chemistry,
 *   from memory).
 * Interval: each integer-order time is a ratio a(C0)/k, so Fieller's interval is used with
 * Var a = a'(C0)²·Var C0 and Cov(a, k) = a'(C0)·Cov(C0, k); where a does not depend on C0 (first-order
 * t½, t90) this is exactly the endpoint transform of k's interval. For the free order the delta method
 * is applied to ln t (three parameters, numerical gradient) and the limits exponentiated. Student t on
 * the fit's residual degrees of freedom. A lower limit below 0 is reported as 0 (time cannot be negative).
 *
 * Reference: E. C. Fieller, J. R. Stat. Soc. B 16 (1954) 175–185 (ratios); delta method, Bates & Watts
 * 1988 §2.3 (from memory); see docs/methods.md#half-life-t90-and-time-to-a-limit.
 *
 * Throws `KineticsError('invalid-input')` for a confidence level outside (0, 1) (from the t quantile).
 * A level the curve never reaches returns `estimate: null` with the reason; an interval that is unbounded
 * returns `ci: null` with reason "not estimable".
 *
 * Example: a first-order fit with k = 0.005 /month (se 0.0005, 10 df) has t90 = 0.10536/0.005 = 21.07
 * months with 95 % interval [0.10536/0.006114, 0.10536/0.003886] = [17.23, 27.11].
 */

export type Level = { fractionRemaining: number } | { value: number };

export interface TimeToLevel {
  estimate: number | null;
  /** [lower, upper] at the requested confidence level; null when not estimable. */
  ci: [number, number] | null;
  method: 'fieller' | 'delta-log' | 'none';
  reason?: string;
}

export function timeToLevel(fit: RateLawFit, level: Level, confidenceLevel: number): TimeToLevel {
  const quantile = studentTQuantile(1 - (1 - confidenceLevel) / 2, fit.degreesOfFreedom);
  const c0 = fit.initialValue;
  const k = fit.rateConstant;
  const isFraction = 'fractionRemaining' in level;
  const target = isFraction ? level.fractionRemaining * c0 : level.value;
  const falling = k > 0;
  if (k === 0) return none('the fitted rate constant is zero, so the value never changes');
  if (falling ? target >= c0 : target <= c0) {
    return none(
      `the fitted initial value ${c0} is already ${falling ? 'at or below' : 'at or above'} the level ${target}`,
    );
  }
  if (falling && (target < 0 || (target === 0 && fit.n >= 1))) {
    return none(`a falling ${orderWords(fit)} curve never reaches ${target}`);
  }
  if (fit.covariance === null)
    return { ...estimateOnly(fit, level), reason: 'no covariance, so no interval' };
  if (fit.model === 'n') return deltaLogInterval(fit, level, quantile);

  const cov = fit.covariance;
  const vcc = cov[0]!;
  const vck = cov[1]!;
  const vkk = cov[3]!;
  let numerator: number;
  let slope: number; // d numerator / d C0
  if (fit.model === 0) {
    numerator = c0 - target;
    slope = isFraction ? 1 - level.fractionRemaining : 1;
  } else if (fit.model === 1) {
    numerator = Math.log(c0 / target);
    slope = isFraction ? 0 : 1 / c0;
  } else {
    numerator = 1 / target - 1 / c0;
    slope = isFraction ? -(1 / level.fractionRemaining - 1) / (c0 * c0) : 1 / (c0 * c0);
  }
  const ratio = fiellerRatioInterval(numerator, k, slope * slope * vcc, vkk, slope * vck, quantile);
  if (!ratio.bounded || ratio.lower === null || ratio.upper === null) {
    return {
      estimate: ratio.estimate,
      ci: null,
      method: 'fieller',
      reason:
        'not estimable: the rate constant is not significantly different from zero at this confidence level',
    };
  }
  return { estimate: ratio.estimate, ci: [Math.max(0, ratio.lower), ratio.upper], method: 'fieller' };
}

/** Time for the free-order law, t = C0^(−m)·(e^(m·r) − 1)/(m·k); r = ln(C0/L). */
export function generalOrderTime(c0: number, k: number, n: number, level: Level): number {
  const m = n - 1;
  const r = 'fractionRemaining' in level ? -Math.log(level.fractionRemaining) : Math.log(c0 / level.value);
  const growth = m === 0 ? r : Math.expm1(m * r) / m;
  return (Math.exp(-m * Math.log(c0)) * growth) / k;
}

function deltaLogInterval(fit: RateLawFit, level: Level, quantile: number): TimeToLevel {
  const parameters = [fit.initialValue, fit.rateConstant, fit.n];
  const logTime = (values: number[]): number =>
    Math.log(generalOrderTime(values[0]!, values[1]!, values[2]!, level));
  const centre = logTime(parameters);
  if (!Number.isFinite(centre)) return none('the free-order curve does not reach this level');
  const gradient = parameters.map((value, index) => {
    const step = 1e-6 * Math.max(Math.abs(value), fit.standardErrors?.[index] ?? 0, 1e-300);
    const up = [...parameters];
    const down = [...parameters];
    up[index] = value + step;
    down[index] = value - step;
    return (logTime(up) - logTime(down)) / (2 * step);
  });
  const cov = fit.covariance!;
  let variance = 0;
  for (let a = 0; a < 3; a++)
    for (let b = 0; b < 3; b++) variance += gradient[a]! * cov[a * 3 + b]! * gradient[b]!;
  const estimate = Math.exp(centre);
  if (!(variance >= 0) || !Number.isFinite(variance)) {
    return {
      estimate,
      ci: null,
      method: 'delta-log',
      reason: 'not estimable: the interval could not be formed',
    };
  }
  const half = quantile * Math.sqrt(variance);
  return { estimate, ci: [Math.exp(centre - half), Math.exp(centre + half)], method: 'delta-log' };
}

function estimateOnly(fit: RateLawFit, level: Level): TimeToLevel {
  const estimate = generalOrderTime(fit.initialValue, fit.rateConstant, fit.n, level);
  return { estimate: Number.isFinite(estimate) ? estimate : null, ci: null, method: 'none' };
}

function none(reason: string): TimeToLevel {
  return { estimate: null, ci: null, method: 'none', reason };
}

function orderWords(fit: RateLawFit): string {
  return fit.model === 'n'
    ? `order-${fit.n.toFixed(2)}`
    : ['zero-order', 'first-order', 'second-order'][fit.model]!;
}
