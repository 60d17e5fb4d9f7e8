import jStat from 'jstat';
import { assertDegreesOfFreedom, assertOpenProbability } from './assert-distribution-arguments.ts';

/**
 * Quantile (inverse cumulative distribution function) of Student's t distribution: the value t
 * with P(T ≤ t) = p for T with the given degrees of freedom.
 *
 * Why: every confidence interval of a regression coefficient (a rate constant, an intercept, the
 * ICH Q1E confidence limit of the mean line) is estimate ± t·(standard error) with t the
 * quantile at 1 − α/2 (two-sided) or 1 − α (one-sided) and n − p degrees of freedom.
 *
 * Formula in words: T² / (df + T²) follows a beta distribution with shape parameters 1/2 and
 * df/2, so the quantile is found by inverting the regularized incomplete beta function; jStat's
 * `studentt.inv` does this. Its continued fraction stops at a relative change of 3e-7, so the
 * result carries about 8 significant digits (measured in `student-t-quantile.test.ts`) —
 * far below any uncertainty a confidence interval expresses.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.6.4 "t Distribution",
 * https://www.itl.nist.gov/div898/handbook/eda/section3/eda3664.htm.
 *
 * Throws `KineticsError('invalid-input')` when p is not strictly between 0 and 1 or the degrees
 * of freedom are not a finite positive number.
 *
 * Example: `studentTQuantile(0.975, 10)` is 2.228 (to 4 digits; table value 2.228).
 */
export function studentTQuantile(p: number, degreesOfFreedom: number): number {
  assertOpenProbability(p, 'p');
  assertDegreesOfFreedom(degreesOfFreedom, 'degreesOfFreedom');
  return jStat.studentt.inv(p, degreesOfFreedom);
}
