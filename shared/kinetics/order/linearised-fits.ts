import type { IntegerOrder } from '../types.ts';
import { transformedStraightLine } from './transformed-straight-line.ts';

/**
 * The three classical straight-line plots of kinetics — value, ln(value) and 1/value against time —
 * fitted by least squares, with the rate constant and initial value each implies.
 *
 * Why: they are what every chemist checks first and what reports show next to the nonlinear fits;
 * the engine also uses them as starting values. They are not the basis of the order decision, because
 * the three R² come from three different weightings of the error (Motulsky & Christopoulos 2003;
 * docs/methods.md#straight-line-plots).
 *
 * Convention −dC/dt = k·Cⁿ. Formula in words:
 * - zero order: value = C0 − k·t, so k = −slope and C0 = intercept;
 * - first order: ln(value) = ln C0 − k·t, so k = −slope and C0 = e^intercept;
 * - second order: 1/value = 1/C0 + k·t, so k = +slope and C0 = 1/intercept.
 * Replicates are separate points. A zero- or first-order plot that rises, or a second-order plot that
 * falls, is marked as not describing the data (the law predicts the opposite direction; common practice),
 * with its numbers still reported. ln and 1/value need positive values: a non-positive value makes those
 * plots not applicable, with a reason naming the point.
 *
 * Reference: OpenStax Chemistry 2e §12.4 "Integrated Rate Laws".
 *
 * Throws `KineticsError('too-few-points' | 'single-time')` from the straight-line fit of the values
 * themselves (fewer than 3 points, one time only); callers pass finite numbers (`prepare-series.ts`).
 *
 * Example: times [0, 1, 2], values [100, 50, 25] give a first-order plot with slope −ln 2, k = 0.6931,
 * C0 = 100 and R² = 1.
 */

export type LinearisedTransform = 'value' | 'ln(value)' | '1/value';

export interface LinearisedFit {
  order: IntegerOrder;
  transform: LinearisedTransform;
  slope: number | null;
  intercept: number | null;
  slopeStandardError: number | null;
  interceptStandardError: number | null;
  rSquared: number | null;
  /** Rate constant implied by the plot (−slope, −slope, +slope). */
  k: number | null;
  /** Initial value implied by the intercept (intercept, e^intercept, 1/intercept); null if 1/intercept ≤ 0. */
  c0: number | null;
  /** Points in the plot. */
  n: number;
  /** False when the plot cannot be drawn (non-positive value) or runs the wrong way for the law. */
  applicable: boolean;
  reason?: string;
}

const TRANSFORMS: readonly LinearisedTransform[] = ['value', 'ln(value)', '1/value'];

export function linearisedFits(
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  labelOf?: (index: number) => string,
): [LinearisedFit, LinearisedFit, LinearisedFit] {
  const zero = straightLine(0, times, values);
  let firstNonPositive = -1;
  for (let i = 0; i < values.length && firstNonPositive < 0; i++) if (!(values[i]! > 0)) firstNonPositive = i;
  if (firstNonPositive >= 0) {
    const label = labelOf?.(firstNonPositive) ?? `point ${firstNonPositive + 1}`;
    const reason = `${label} has value ${values[firstNonPositive]}, which has no logarithm or meaningful reciprocal`;
    return [zero, notApplicable(1, times.length, reason), notApplicable(2, times.length, reason)];
  }
  return [zero, straightLine(1, times, values), straightLine(2, times, values)];
}

function straightLine(
  order: IntegerOrder,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
): LinearisedFit {
  const line = transformedStraightLine(times, values, TRANSFORMS[order]!);
  const k = order === 2 ? line.slope : -line.slope;
  const c0 = order === 0 ? line.intercept : order === 1 ? Math.exp(line.intercept) : 1 / line.intercept;
  const fit: LinearisedFit = {
    order,
    transform: TRANSFORMS[order]!,
    slope: line.slope,
    intercept: line.intercept,
    slopeStandardError: line.slopeStandardError,
    interceptStandardError: line.interceptStandardError,
    rSquared: line.rSquared,
    k,
    c0: Number.isFinite(c0) && c0 > 0 ? c0 : order === 0 ? c0 : null,
    n: line.n,
    applicable: true,
  };
  if (k < 0) {
    fit.applicable = false;
    fit.reason =
      order === 2
        ? 'the 1/value plot falls, so a second-order loss law does not describe the data'
        : `the ${TRANSFORMS[order]} plot rises, so a ${order === 0 ? 'zero' : 'first'}-order loss law does not describe the data`;
  }
  return fit;
}

function notApplicable(order: IntegerOrder, n: number, reason: string): LinearisedFit {
  return {
    order,
    transform: TRANSFORMS[order]!,
    slope: null,
    intercept: null,
    slopeStandardError: null,
    interceptStandardError: null,
    rSquared: null,
    k: null,
    c0: null,
    n,
    applicable: false,
    reason,
  };
}
