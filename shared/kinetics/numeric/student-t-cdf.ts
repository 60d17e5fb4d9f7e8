import jStat from 'jstat';
import { assertDegreesOfFreedom, assertStatistic } from './assert-distribution-arguments.ts';

/**
 * Cumulative distribution function of Student's t distribution, P(T ≤ t).
 *
 * Why: turns a t statistic (estimate divided by its standard error) into a p-value, e.g. for
 * "is the degradation slope different from zero?".
 *
 * Formula in words: with x = df / (df + t²), the probability beyond |t| in one tail is half the
 * regularized incomplete beta function I_x(df/2, 1/2); for negative t that tail is the answer,
 * for positive t the answer is one minus it. Evaluating the tail directly keeps small tail
 * probabilities accurate instead of subtracting two numbers close to 1.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.6.4 "t Distribution",
 * https://www.itl.nist.gov/div898/handbook/eda/section3/eda3664.htm; Abramowitz & Stegun 26.7.1.
 *
 * Throws `KineticsError('invalid-input')` for NaN t or degrees of freedom that are not finite and positive.
 * t = ±Infinity gives 1 or 0.
 *
 * Example: `studentTCdf(2.228, 10)` is about 0.975.
 */
export function studentTCdf(t: number, degreesOfFreedom: number): number {
  assertStatistic(t, 't');
  assertDegreesOfFreedom(degreesOfFreedom, 'degreesOfFreedom');
  if (t === Number.POSITIVE_INFINITY) {
    return 1;
  }
  if (t === Number.NEGATIVE_INFINITY) {
    return 0;
  }
  const tail = 0.5 * jStat.ibeta(degreesOfFreedom / (degreesOfFreedom + t * t), degreesOfFreedom / 2, 0.5);
  return t < 0 ? tail : 1 - tail;
}
