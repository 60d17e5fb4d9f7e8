import { KineticsError } from './kinetics-error.ts';

/**
 * Sum of a list of numbers with Neumaier's compensated (Kahan–Babuška) summation.
 *
 * Why: adding many numbers one by one in floating point loses the low-order digits of each
 * addition. When the terms differ widely in size, or cancel (as centred deviations do), the
 * naive sum can be wrong in every digit. Compensated summation carries the rounding error of
 * every addition in a second accumulator and adds it back at the end, so the result is as
 * accurate as if the sum had been formed in twice the working precision and then rounded.
 *
 * Formula in words: keep a running `sum` and a running `compensation`. For each value, form
 * `next = sum + value`; if |sum| ≥ |value| the part of `value` lost in rounding is
 * `(sum − next) + value`, otherwise the part of `sum` lost is `(value − next) + sum`; add that
 * lost part to `compensation`. The answer is `sum + compensation`.
 *
 * Reference: A. Neumaier, "Rundungsfehleranalyse einiger Verfahren zur Summation endlicher
 * Summen", ZAMM 54 (1974) 39–51; freely described at
 * https://en.wikipedia.org/wiki/Kahan_summation_algorithm#Further_enhancements.
 *
 * Throws nothing: an empty list sums to 0. Non-finite inputs give a non-finite sum; callers
 * validate their input first (see `assertFiniteNumbers`).
 *
 * Example: `compensatedSum([1, 1e100, 1, -1e100])` is `2` (the naive loop gives `0`).
 */
export function compensatedSum(values: readonly number[]): number {
  let sum = 0;
  let compensation = 0;
  for (const value of values) {
    const next = sum + value;
    if (Math.abs(sum) >= Math.abs(value)) {
      compensation += sum - next + value;
    } else {
      compensation += value - next + sum;
    }
    sum = next;
  }
  return sum + compensation;
}

/**
 * Arithmetic mean with compensated summation: `compensatedSum(values) / values.length`.
 *
 * Throws `KineticsError('too-few-points')` for an empty list, whose mean is undefined.
 *
 * Example: `compensatedMean([1e16, 1, -1e16, 2])` is `0.75`.
 */
export function compensatedMean(values: readonly number[]): number {
  if (values.length === 0) {
    throw new KineticsError('too-few-points', 'The mean of an empty list is undefined.', { n: 0 });
  }
  return compensatedSum(values) / values.length;
}
