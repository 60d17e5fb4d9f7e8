/**
 * Fieller's confidence interval for a ratio θ = a/b of two estimates with known variances and
 * covariance — e.g. a zero-order t90 = 0.1·C0/k, or the time C0 − k·t takes to reach a limit.
 *
 * Why: the delta method treats a/b as if it were normally distributed, which fails exactly when the
 * denominator is uncertain. Fieller's interval is exact for normal estimates, is never narrower than
 * the delta interval, and is honest about the case that matters: when the denominator is not
 * significantly different from zero the interval is unbounded, and is then reported as "not
 * estimable" rather than as a huge number (Fieller 1954; docs/methods.md#half-life-t90-and-time-to-a-limit).
 *
 * Formula in words: the interval is the set of θ with (a − θ·b)² ≤ q²·(Vaa − 2θ·Vab + θ²·Vbb),
 * q the Student-t quantile. That is the quadratic θ²(b² − q²Vbb) − 2θ(ab − q²Vab) + (a² − q²Vaa) ≤ 0,
 * bounded exactly when g = q²·Vbb/b² < 1; its two roots are the limits.
 *
 * Reference: E. C. Fieller, J. R. Stat. Soc. Suppl. 7 (1940) 1–64; J. R. Stat. Soc. B 16 (1954) 175–185;
 * free account: https://en.wikipedia.org/wiki/Fieller%27s_theorem.
 *
 * Throws nothing: an unbounded interval (g ≥ 1, or a denominator estimate of 0) returns
 * `{ estimate, lower: null, upper: null, bounded: false }` (estimate null when b = 0).
 *
 * Example: a = 10, b = 2, Vaa = 0, Vab = 0, Vbb = 0.01, q = 2 gives θ = 5 and [10/2.2, 10/1.8] =
 * [4.545, 5.556], the endpoint transform of b's interval.
 */

export interface RatioInterval {
  estimate: number | null;
  lower: number | null;
  upper: number | null;
  bounded: boolean;
}

export function fiellerRatioInterval(
  numerator: number,
  denominator: number,
  numeratorVariance: number,
  denominatorVariance: number,
  covariance: number,
  quantile: number,
): RatioInterval {
  if (denominator === 0 || !Number.isFinite(numerator / denominator)) {
    return { estimate: null, lower: null, upper: null, bounded: false };
  }
  const estimate = numerator / denominator;
  const q2 = quantile * quantile;
  const leading = denominator * denominator - q2 * denominatorVariance;
  if (!(leading > 0)) {
    return { estimate, lower: null, upper: null, bounded: false };
  }
  const half = numerator * denominator - q2 * covariance;
  const constant = numerator * numerator - q2 * numeratorVariance;
  const discriminant = Math.max(0, half * half - leading * constant);
  const root = Math.sqrt(discriminant);
  const first = (half - root) / leading;
  const second = (half + root) / leading;
  return { estimate, lower: Math.min(first, second), upper: Math.max(first, second), bounded: true };
}
