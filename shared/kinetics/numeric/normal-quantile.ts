import jStat from 'jstat';
import { assertOpenProbability } from './assert-distribution-arguments.ts';

/**
 * Quantile of the standard normal distribution: the z with P(Z ≤ z) = p.
 *
 * Why: large-sample intervals and coverage factors (z = 1.96 for 95 % two-sided) and normal
 * probability plots of residuals.
 *
 * Formula in words: z = −√2 · erfc⁻¹(2p), the inverse complementary error function, as jStat's
 * `normal.inv` computes it.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.6.1 "Normal Distribution",
 * https://www.itl.nist.gov/div898/handbook/eda/section3/eda3661.htm.
 *
 * Throws `KineticsError('invalid-input')` when p is not strictly between 0 and 1.
 *
 * Example: `normalQuantile(0.975)` is 1.959964 (to 7 digits).
 */
export function normalQuantile(p: number): number {
  assertOpenProbability(p, 'p');
  return jStat.normal.inv(p, 0, 1);
}
