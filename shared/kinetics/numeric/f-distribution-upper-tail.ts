import jStat from 'jstat';
import { assertDegreesOfFreedom, assertStatistic } from './assert-distribution-arguments.ts';

/**
 * Upper-tail probability of Fisher's F distribution, P(F ≥ f): the p-value of an F test.
 *
 * Why: the extra-sum-of-squares test between nested models, the lack-of-fit test and the ICH Q1E
 * poolability ANCOVA (slopes, then intercepts, at significance 0.25) all report this p-value.
 *
 * Formula in words: with x = df2 / (df2 + df1·f), the upper tail equals the regularized
 * incomplete beta function I_x(df2/2, df1/2). Computing the upper tail directly (rather than one
 * minus the cumulative probability) keeps very small p-values accurate.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.6.5 "F Distribution",
 * https://www.itl.nist.gov/div898/handbook/eda/section3/eda3665.htm; Abramowitz & Stegun 26.6.2.
 *
 * Throws `KineticsError('invalid-input')` for a negative or NaN f, or degrees of freedom that
 * are not finite and positive. f = 0 gives 1; f = Infinity gives 0.
 *
 * Example: `fDistributionUpperTail(4.965, 1, 10)` is about 0.05 (table value F(0.95; 1, 10) = 4.965).
 */
export function fDistributionUpperTail(
  f: number,
  degreesOfFreedom1: number,
  degreesOfFreedom2: number,
): number {
  assertStatistic(f, 'f', 0);
  assertDegreesOfFreedom(degreesOfFreedom1, 'degreesOfFreedom1');
  assertDegreesOfFreedom(degreesOfFreedom2, 'degreesOfFreedom2');
  if (f === Number.POSITIVE_INFINITY) {
    return 0;
  }
  const x = degreesOfFreedom2 / (degreesOfFreedom2 + degreesOfFreedom1 * f);
  return Math.min(1, Math.max(0, jStat.ibeta(x, degreesOfFreedom2 / 2, degreesOfFreedom1 / 2)));
}
