import type { IntegerOrder } from '../types.ts';
import type { RateLawStart } from './fit-rate-law.ts';
import type { LinearisedFit } from './linearised-fits.ts';

/**
 * Starting values (C0, k) for the nonlinear fit of each integer order, taken from the linearised plots.
 *
 * Why: Levenberg–Marquardt converges in a few steps from a start near the answer; the straight-line
 * plots give such a start for free.
 *
 * Formula in words: order 0 from the value plot (C0 = intercept, or the largest value when the intercept
 * is not positive; k = −slope); order 1 from the ln plot
 * (C0 = e^intercept, k = −slope) and order 2 from the 1/value plot (C0 = 1/intercept, k = slope). When a
 * plot is unavailable (a non-positive value) or gives a non-positive C0, the zero-order line stands in:
 * C0 = its intercept (or the largest value if that is not positive) and k = k0/C0 (order 1) or k0/C0²
 * (order 2), which match its initial slope.
 *
 * Reference: the linear plots of each order, OpenStax Chemistry 2e §12.4
 * (docs/methods.md#straight-line-plots).
 *
 * Throws nothing.
 *
 * Example: zero-order line intercept 100, slope −2 with no ln plot gives the first-order start
 * C0 = 100, k = 0.02.
 */
export function startingValues(
  order: IntegerOrder,
  linearised: readonly [LinearisedFit, LinearisedFit, LinearisedFit],
  largestValue: number,
): RateLawStart {
  const line = linearised[0];
  const lineIntercept = line.intercept ?? largestValue;
  const initialValue = lineIntercept > 0 ? lineIntercept : largestValue;
  const zeroOrderRate = line.k ?? 0;
  const plot = linearised[order];
  if (order !== 0 && plot.k !== null && plot.c0 !== null && plot.c0 > 0) {
    return { initialValue: plot.c0, rateConstant: plot.k };
  }
  if (order === 0) return { initialValue, rateConstant: zeroOrderRate };
  return {
    initialValue,
    rateConstant: order === 1 ? zeroOrderRate / initialValue : zeroOrderRate / (initialValue * initialValue),
  };
}
