import type { RateLawModel } from '../types.ts';
import { initialRateLawAt, prepareRateLaw, rateLawAt } from './integrated-rate-law.ts';

/**
 * The least-squares objective of a rate-law fit in one pass over the points: the residual sum of squares
 * (compensated summation), and optionally JᵀJ and Jᵀr, accumulated without storing the Jacobian.
 *
 * Why one pass and no matrix: the fit runs on series of up to 10⁵ points thousands of times; forming the
 * 2×2 or 3×3 normal equations point by point costs a few multiplications and no allocation.
 *
 * Formula in words: rᵢ = yᵢ − C(tᵢ) (constant error) or ln yᵢ − ln C(tᵢ) (proportional error, with the
 * derivatives divided by C(tᵢ)); RSS = Σ rᵢ² with Neumaier's compensation; (JᵀJ)ₐᵦ = Σ Jᵢₐ·Jᵢᵦ,
 * (Jᵀr)ₐ = Σ Jᵢₐ·rᵢ. The free order is evaluated in initial-rate form (C0, r0, n) unless `original` is set.
 *
 * Reference: compensated summation as in `numeric/compensated-sum.ts` (Neumaier 1974).
 *
 * Throws nothing: returns NaN when the parameters are infeasible (the law undefined at some time, or a
 * non-positive prediction on the log scale), which the fitter treats as a rejected step.
 *
 * Example: for order 1 at (C0, k) = (100, ln 2) and points (0, 100), (1, 50) the RSS is 0.
 */

export interface NormalEquations {
  /** p×p row-major JᵀJ. */
  normal: Float64Array;
  /** Jᵀr. */
  gradient: Float64Array;
}

export type RateLawObjective = (
  parameters: Float64Array,
  normal: NormalEquations | null,
  original?: boolean,
) => number;

export function rateLawObjective(
  model: RateLawModel,
  times: ArrayLike<number>,
  response: Float64Array,
  logScale: boolean,
): RateLawObjective {
  const p = model === 'n' ? 3 : 2;
  const pointCount = times.length;
  const row = new Float64Array(3);
  return (parameters, equations, original = false) => {
    const reparametrised = model === 'n' && !original;
    const law = reparametrised ? null : prepareRateLaw(model, parameters[0]!, parameters[1]!, parameters[2]!);
    const derivatives = equations === null ? null : row;
    const normal = equations?.normal;
    const gradient = equations?.gradient;
    normal?.fill(0);
    gradient?.fill(0);
    let rss = 0;
    let compensation = 0;
    for (let i = 0; i < pointCount; i++) {
      const predicted =
        law === null
          ? initialRateLawAt(parameters[0]!, parameters[1]!, parameters[2]!, times[i]!, derivatives)
          : rateLawAt(law, times[i]!, derivatives);
      let residual: number;
      if (logScale) {
        if (!(predicted > 0)) return Number.NaN;
        residual = response[i]! - Math.log(predicted);
        if (derivatives !== null) for (let a = 0; a < p; a++) row[a] = row[a]! / predicted;
      } else {
        if (Number.isNaN(predicted)) return Number.NaN;
        residual = response[i]! - predicted;
      }
      const square = residual * residual;
      const next = rss + square;
      compensation += rss >= square ? rss - next + square : square - next + rss;
      rss = next;
      if (normal !== undefined && gradient !== undefined) {
        for (let a = 0; a < p; a++) {
          const entry = row[a]!;
          gradient[a] = gradient[a]! + entry * residual;
          for (let b = 0; b <= a; b++) normal[a * p + b] = normal[a * p + b]! + entry * row[b]!;
        }
      }
    }
    if (normal !== undefined) {
      for (let a = 0; a < p; a++) for (let b = 0; b < a; b++) normal[b * p + a] = normal[a * p + b]!;
    }
    const total = rss + compensation;
    return Number.isFinite(total) ? total : Number.NaN;
  };
}

/**
 * The Jacobian of the same residuals as `rateLawObjective`, as `columnCount` columns (∂C/∂θₐ, divided by
 * C on the log scale), in the same parameters (initial-rate form for the free order), for the QR-based
 * covariance (`numeric/nonlinear-covariance.ts`) at a fit's answer. Same formulas, one pass, no closures.
 * Entries are NaN where the law is undefined or, on the log scale, not positive.
 */
export function rateLawJacobianColumns(
  model: RateLawModel,
  times: ArrayLike<number>,
  logScale: boolean,
  parameters: ArrayLike<number>,
  columnCount: 2 | 3,
): Float64Array[] {
  const pointCount = times.length;
  const columns = Array.from({ length: columnCount }, () => new Float64Array(pointCount));
  const row = new Float64Array(3);
  const law = model === 'n' ? null : prepareRateLaw(model, parameters[0]!, parameters[1]!);
  for (let i = 0; i < pointCount; i++) {
    const predicted =
      law === null
        ? initialRateLawAt(parameters[0]!, parameters[1]!, parameters[2]!, times[i]!, row)
        : rateLawAt(law, times[i]!, row);
    const divisor = logScale
      ? predicted > 0
        ? predicted
        : Number.NaN
      : Number.isNaN(predicted)
        ? Number.NaN
        : 1;
    for (let a = 0; a < columnCount; a++) columns[a]![i] = row[a]! / divisor;
  }
  return columns;
}
