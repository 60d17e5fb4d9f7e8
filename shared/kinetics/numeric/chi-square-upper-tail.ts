import jStat from 'jstat';
import { assertDegreesOfFreedom, assertStatistic } from './assert-distribution-arguments.ts';

/**
 * Upper-tail probability of the chi-square distribution, P(X ≥ x): the p-value of a chi-square
 * test, e.g. a weighted goodness-of-fit test with known measurement variances.
 *
 * Formula in words: one minus the regularized lower incomplete gamma function P(df/2, x/2),
 * which jStat's `chisquare.cdf` evaluates; the result is clamped to [0, 1] against rounding.
 * Probabilities below about 1e-15 are reported as 0 (the subtraction cannot resolve them),
 * which no decision depends on.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.6.6 "Chi-Square Distribution",
 * https://www.itl.nist.gov/div898/handbook/eda/section3/eda3666.htm.
 *
 * Throws `KineticsError('invalid-input')` for a negative or NaN x, or degrees of freedom that
 * are not finite and positive. x = 0 gives 1; x = Infinity gives 0.
 *
 * Example: `chiSquareUpperTail(3.841, 1)` is about 0.05 (table value χ²(0.95; 1) = 3.841).
 */
export function chiSquareUpperTail(x: number, degreesOfFreedom: number): number {
  assertStatistic(x, 'x', 0);
  assertDegreesOfFreedom(degreesOfFreedom, 'degreesOfFreedom');
  if (x === 0) {
    return 1;
  }
  if (x === Number.POSITIVE_INFINITY) {
    return 0;
  }
  return Math.min(1, Math.max(0, 1 - jStat.chisquare.cdf(x, degreesOfFreedom)));
}
