import { fDistributionUpperTail } from '../numeric/f-distribution-upper-tail.ts';

/**
 * Extra-sum-of-squares F test of a reduced model nested in a fuller one — here "order fixed at 0, 1 or 2"
 * against "order n fitted", which adds one parameter.
 *
 * Why: the free-order law contains each integer order as a special case, so whether the data contradict
 * a named integer order is a proper nested test (docs/methods.md#free-order-f-test).
 *
 * Formula in words: F = [(RSS_reduced − RSS_full)/(df_reduced − df_full)] / (RSS_full/df_full), referred to
 * the F distribution with (df_reduced − df_full, df_full) degrees of freedom; p is its upper tail. A full fit
 * that is not better than the reduced one (possible only through rounding) gives F = 0, p = 1; an exact full
 * fit gives p = 0 unless the reduced fit is exact too.
 *
 * Reference: H. J. Motulsky & A. Christopoulos, Fitting Models to Biological Data (2003), Part F
 * "Comparing models" (from memory).
 *
 * Throws `KineticsError('invalid-input')` when df_full ≤ 0 or df_reduced ≤ df_full (from the F tail).
 *
 * Example: RSS 12 on 10 df against RSS 8 on 9 df gives F = 4/(8/9) = 4.5 and p = 0.0628.
 */

export interface FTestResult {
  f: number;
  p: number;
  numeratorDegreesOfFreedom: number;
  denominatorDegreesOfFreedom: number;
}

export function extraSumOfSquaresFTest(
  reducedResidualSumOfSquares: number,
  reducedDegreesOfFreedom: number,
  fullResidualSumOfSquares: number,
  fullDegreesOfFreedom: number,
): FTestResult {
  const numeratorDegreesOfFreedom = reducedDegreesOfFreedom - fullDegreesOfFreedom;
  const extra = Math.max(0, reducedResidualSumOfSquares - fullResidualSumOfSquares);
  let f: number;
  if (fullResidualSumOfSquares > 0) {
    f = extra / numeratorDegreesOfFreedom / (fullResidualSumOfSquares / fullDegreesOfFreedom);
  } else {
    f = extra > 0 ? Number.POSITIVE_INFINITY : 0;
  }
  const p = fDistributionUpperTail(f, numeratorDegreesOfFreedom, fullDegreesOfFreedom);
  return {
    f: Number.isFinite(f) ? f : Number.MAX_VALUE,
    p,
    numeratorDegreesOfFreedom,
    denominatorDegreesOfFreedom: fullDegreesOfFreedom,
  };
}
