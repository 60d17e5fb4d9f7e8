import { KineticsError } from '../numeric/kinetics-error.ts';
import type { ErrorModel, RateLawModel } from '../types.ts';

export type { RateLawModel } from '../types.ts';

import { type NormalEquations, rateLawObjective } from './rate-law-objective.ts';
import { invertSmallSymmetric, solveSmallSymmetric } from './small-cholesky.ts';

/**
 * Fits an integrated rate law (order 0, 1, 2, or a free order n) to a series on its original scale
 * by nonlinear least squares (Levenberg–Marquardt), with analytic derivatives.
 *
 * Why: fitting the untransformed values keeps the measurement error where it is, so the estimates
 * and their standard errors mean what they say (Motulsky & Christopoulos 2003, "Avoid Scatchard,
 * Lineweaver-Burk and similar transforms"; docs/methods.md#rate-law-fits).
 *
 * Error models:
 * - 'constant' (same SD at every value): minimise Σ (yᵢ − C(tᵢ))², unweighted.
 * - 'proportional' (same relative SD): minimise Σ (ln yᵢ − ln C(tᵢ))², i.e. fit on the log scale.
 *   This is the maximum-likelihood fit for log-normal error and, to first order, the same as weights
 *   1/ŷᵢ², without re-weighting iterations. Every value must then be positive.
 *
 * Formula in words: from the start, repeat: form JᵀJ and Jᵀr from the residuals r and the
 * derivatives J of the model (of ln C for the log scale); solve (JᵀJ + λ·diag JᵀJ)·δ = Jᵀr; accept
 * the step when the residual sum of squares falls (then λ shrinks tenfold), otherwise raise λ
 * tenfold. Stop when the Bates–Watts relative offset √(rᵀP r/p)/√(rᵀr/(N − p)), P the projection
 * onto the tangent plane, is below `RELATIVE_OFFSET_TOLERANCE`. Covariance = s²·(JᵀJ)⁻¹ with
 * s² = RSS/(N − p). The free order is iterated in initial-rate form (C0, r0 = k·C0ⁿ, n), which is far
 * better conditioned at low conversion, and converted back to (C0, k, n) for the covariance. n is kept in
 * `ORDER_SEARCH_RANGE`; once a step is stopped at a limit, n stays there and the fit is reported with the
 * reason "the data do not determine the order". Series above 5000 points start from a fit to a
 * 1000-point subsample; a zero-order line that reaches 0 inside the data extends accepted steps by
 * doubling (past its end the derivatives vanish, so Gauss–Newton undershoots the end point).
 *
 * Why not `numeric/levenberg-marquardt.ts`: that general solver (MINPACK port) builds a Jacobian row array
 * per point per iteration; this one streams the 2×2/3×3 normal equations without allocation, which a
 * 10⁵-point series fitted four or five times needs. `fit-rate-law.test.ts` checks both agree.
 *
 * Reference: D. W. Marquardt, J. Soc. Ind. Appl. Math. 11 (1963) 431–441; D. M. Bates & D. G. Watts,
 * Nonlinear Regression Analysis and Its Applications (1988) §2.2.3 (relative offset criterion).
 *
 * Throws `KineticsError('too-few-points')` when N ≤ number of parameters,
 * `KineticsError('non-positive-value')` for the proportional model with a value ≤ 0, and
 * `KineticsError('not-converged')` when no feasible start can be found.
 *
 * Example: `fitRateLaw(1, [0, 1, 2], [100, 50, 25], 'constant', { initialValue: 90, rateConstant: 0.5 })`
 * gives initialValue 100 and rateConstant ln 2 = 0.6931 (an exact fit).
 */

export interface RateLawStart {
  initialValue: number;
  rateConstant: number;
  /** Starting order for the free-order model (ignored for integer orders). */
  n?: number;
}

export interface RateLawFit {
  model: RateLawModel;
  errorModel: ErrorModel;
  initialValue: number;
  rateConstant: number;
  /** The order: fixed for 0/1/2, fitted for 'n'. */
  n: number;
  parameterCount: 2 | 3;
  /** Row-major covariance of (C0, k[, n]); null when JᵀJ is singular. */
  covariance: number[] | null;
  standardErrors: number[] | null;
  /** On the fitting scale (values, or natural logarithms of values). */
  residualSumOfSquares: number;
  degreesOfFreedom: number;
  residualStandardDeviation: number;
  pointCount: number;
  /** Gaussian log-likelihood of the values on their original scale at the maximum-likelihood σ. */
  logLikelihood: number;
  iterations: number;
  converged: boolean;
  /** Free order only: the fit stopped at an end of `ORDER_SEARCH_RANGE` (the data do not determine n). */
  atSearchLimit: boolean;
  reason: string;
}

/** Bates–Watts relative offset below which the fit has converged (they suggest 1e-3; tighter costs little here). */
export const RELATIVE_OFFSET_TOLERANCE = 1e-6;
/**
 * Relative offset that rounding in sums over 10⁵ points can leave; below it a step that fails to lower the
 * RSS ends the fit as converged (Bates & Watts' own suggestion is 1e-3: the parameters then sit within
 * 0.1 % of a standard error of the minimum).
 */
const ROUNDING_OFFSET_TOLERANCE = 1e-3;
/**
 * An accepted step that lowers the RSS by less than this fraction, near the minimum (offset below
 * `ROUNDING_OFFSET_TOLERANCE`), ends the fit: on long series with a zero-order end point the RSS has a
 * tiny kink at every point the end passes, and further steps only creep between them.
 */
const STALLED_RELATIVE_DECREASE = 1e-9;
/** A residual sum of squares this small relative to Σy² is an exact fit. */
const EXACT_FIT_TOLERANCE = 1e-26;
export const MAX_ITERATIONS = 200;
const INITIAL_DAMPING = 1e-3;
const MAX_DAMPING = 1e16;
/**
 * Above this many points the fit first runs on an evenly spaced subsample of about `WARM_START_POINTS`
 * points and starts from that answer: the subsample sees the same curve, its iterations cost a fraction
 * as much, and the full fit then needs only the last few steps.
 */
const WARM_START_MIN_POINTS = 5000;
const WARM_START_POINTS = 1000;
/** The free order is searched on this interval. */
export const ORDER_SEARCH_RANGE: readonly [number, number] = [-1, 5];

export function fitRateLaw(
  model: RateLawModel,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  errorModel: ErrorModel,
  initialStart: RateLawStart,
): RateLawFit {
  let start = initialStart;
  const pointCount = times.length;
  const p: 2 | 3 = model === 'n' ? 3 : 2;
  if (pointCount <= p) {
    throw new KineticsError(
      'too-few-points',
      `A ${describe(model)} fit has ${p} parameters and needs at least ${p + 1} points; got ${pointCount}.`,
      { n: pointCount, parameters: p },
    );
  }
  const logScale = errorModel === 'proportional';
  const response = new Float64Array(pointCount);
  let sumOfSquaresOfResponse = 0;
  let sumOfLogValues = 0;
  for (let i = 0; i < pointCount; i++) {
    const value = values[i]!;
    if (logScale && !(value > 0)) {
      throw new KineticsError(
        'non-positive-value',
        `The proportional error model fits ln(value); point ${i + 1} has value ${value}.`,
        { index: i, value },
      );
    }
    response[i] = logScale ? Math.log(value) : value;
    if (logScale) sumOfLogValues += response[i]!;
    sumOfSquaresOfResponse += response[i]! ** 2;
  }
  const objective = rateLawObjective(model, times, response, logScale);
  if (pointCount > WARM_START_MIN_POINTS) start = warmStart(model, times, values, errorModel, start);

  // The free order is iterated in initial-rate form (C0, r0 = k·C0ⁿ, n); see `initialRateLawAt`.
  const freeOrder = model === 'n';
  const startOrder = freeOrder ? (start.n ?? 1) : model;
  const theta = new Float64Array([
    start.initialValue,
    freeOrder ? start.rateConstant * Math.exp(startOrder * Math.log(start.initialValue)) : start.rateConstant,
    startOrder,
  ]);
  let current: NormalEquations & { rss: number } = {
    rss: 0,
    normal: new Float64Array(p * p),
    gradient: new Float64Array(p),
  };
  let trial: NormalEquations & { rss: number } = {
    rss: 0,
    normal: new Float64Array(p * p),
    gradient: new Float64Array(p),
  };
  current.rss = objective(theta, current);
  for (let attempt = 0; Number.isNaN(current.rss) && attempt < 60; attempt++) {
    theta[1] = theta[1]! / 2; // an infeasible start is almost always a rate constant too large for the time span
    current.rss = objective(theta, current);
  }
  if (Number.isNaN(current.rss)) {
    throw new KineticsError('not-converged', `No feasible starting point for the ${describe(model)} fit.`, {
      model,
    });
  }

  const step = new Float64Array(p);
  const block = new Float64Array(p * p);
  const candidate = new Float64Array(3);
  const degreesOfFreedom = pointCount - p;
  let damping = INITIAL_DAMPING;
  let iterations = 0;
  let converged = false;
  let reason = 'iteration limit reached';
  // Parameters still free: all of them, or (C0, r0) once the free order has been stopped at a search limit.
  let active: 2 | 3 = p;
  let atSearchLimit = false;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    if (current.rss <= EXACT_FIT_TOLERANCE * sumOfSquaresOfResponse) {
      converged = true;
      reason = 'exact fit';
      break;
    }
    leadingBlock(current.normal, p, active, block);
    const offset = relativeOffset(block, current.gradient, current.rss, step, active, degreesOfFreedom);
    if (offset !== null && offset < RELATIVE_OFFSET_TOLERANCE) {
      converged = true;
      reason = 'relative offset below tolerance';
      break;
    }
    let accepted = false;
    let clamped = false;
    while (damping <= MAX_DAMPING) {
      leadingBlock(current.normal, p, active, block);
      for (let a = 0; a < active; a++) block[a * active + a] = block[a * active + a]! * (1 + damping);
      if (solveSmallSymmetric(block, current.gradient, step, active)) {
        candidate.set(theta);
        for (let a = 0; a < active; a++) candidate[a] = theta[a]! + step[a]!;
        clamped = false;
        if (active === 3) {
          const limited = Math.min(ORDER_SEARCH_RANGE[1], Math.max(ORDER_SEARCH_RANGE[0], candidate[2]!));
          clamped = limited !== candidate[2];
          candidate[2] = limited;
        }
        trial.rss = objective(candidate, trial);
        if (!Number.isNaN(trial.rss) && trial.rss < current.rss) {
          accepted = true;
          break;
        }
      }
      // Within rounding of the minimum (long series), a rejected step means there is nothing left to gain.
      if (offset !== null && offset < ROUNDING_OFFSET_TOLERANCE) break;
      damping *= 10;
    }
    if (!accepted) {
      // No step lowers the sum of squares: at a minimum to working precision unless the offset says otherwise.
      converged = offset !== null && offset < ROUNDING_OFFSET_TOLERANCE;
      reason = converged ? 'no further decrease possible' : 'no decrease found';
      break;
    }
    const gain = (current.rss - trial.rss) / current.rss;
    theta.set(candidate);
    [current, trial] = [trial, current];
    if (model === 0 && endsWithinData(theta, times)) {
      // Past its end the line has zero derivatives, so Gauss–Newton undershoots the end point; extend the step
      // (doubling) while the sum of squares keeps falling.
      for (let factor = 1; factor <= 64; factor *= 2) {
        for (let a = 0; a < active; a++) candidate[a] = theta[a]! + factor * step[a]!;
        trial.rss = objective(candidate, trial);
        if (Number.isNaN(trial.rss) || trial.rss >= current.rss) break;
        theta.set(candidate);
        [current, trial] = [trial, current];
      }
    }
    if (gain < STALLED_RELATIVE_DECREASE && offset !== null && offset < ROUNDING_OFFSET_TOLERANCE) {
      converged = true;
      reason = 'the sum of squares no longer decreases';
      iterations++;
      break;
    }
    damping = Math.max(damping / 10, 1e-12);
    if (clamped) {
      active = 2;
      atSearchLimit = true;
    }
  }

  // Back to (C0, k, n): k = r0·C0^(−n) for the free order, and JᵀJ in those parameters for the covariance.
  if (freeOrder) {
    theta[1] = theta[1]! * Math.exp(-theta[2]! * Math.log(theta[0]!));
    current.rss = objective(theta, current, true);
  }
  const n = freeOrder ? theta[2]! : model;
  if (atSearchLimit && converged) {
    reason = `the data do not determine the order: the fit stopped at the search limit n = ${n}`;
  }
  const residualVariance = current.rss / degreesOfFreedom;
  const inverse = invertSmallSymmetric(current.normal, p);
  const covariance = inverse === null ? null : Array.from(inverse, (entry) => entry * residualVariance);
  const standardErrors =
    covariance === null
      ? null
      : Array.from({ length: p }, (_, a) => Math.sqrt(Math.max(0, covariance[a * p + a]!)));
  if (covariance === null) {
    converged = false;
    reason = 'the parameters are not determined by the data (singular JᵀJ)';
  }
  const logLikelihood =
    (-pointCount / 2) * (Math.log((2 * Math.PI * Math.max(current.rss, Number.MIN_VALUE)) / pointCount) + 1) -
    sumOfLogValues;
  return {
    model,
    errorModel,
    initialValue: theta[0]!,
    rateConstant: theta[1]!,
    n,
    parameterCount: p,
    covariance,
    standardErrors,
    residualSumOfSquares: current.rss,
    degreesOfFreedom,
    residualStandardDeviation: Math.sqrt(residualVariance),
    pointCount,
    logLikelihood,
    iterations,
    converged,
    atSearchLimit,
    reason,
  };
}

function warmStart(
  model: RateLawModel,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  errorModel: ErrorModel,
  start: RateLawStart,
): RateLawStart {
  const stride = Math.ceil(times.length / WARM_START_POINTS);
  const sampledTimes: number[] = [];
  const sampledValues: number[] = [];
  for (let i = 0; i < times.length; i += stride) {
    sampledTimes.push(times[i]!);
    sampledValues.push(values[i]!);
  }
  try {
    const rough = fitRateLaw(model, sampledTimes, sampledValues, errorModel, start);
    return { initialValue: rough.initialValue, rateConstant: rough.rateConstant, n: rough.n };
  } catch {
    return start; // the full fit reports its own problem
  }
}

/** True when a zero-order line (C0, k) reaches 0 before the last time, so some points sit on its flat end. */
function endsWithinData(theta: Float64Array, times: ArrayLike<number>): boolean {
  const initialValue = theta[0]!;
  const rateConstant = theta[1]!;
  return initialValue > 0 && rateConstant > 0 && initialValue / rateConstant < times[times.length - 1]!;
}

/** Copies the leading `active`×`active` block of a p×p row-major matrix into `out` (row-major, stride `active`). */
function leadingBlock(matrix: Float64Array, p: number, active: number, out: Float64Array): void {
  for (let a = 0; a < active; a++) for (let b = 0; b < active; b++) out[a * active + b] = matrix[a * p + b]!;
}

/** Bates–Watts relative offset from the undamped Gauss–Newton step; null when JᵀJ is singular. */
function relativeOffset(
  normal: Float64Array,
  gradient: Float64Array,
  rss: number,
  step: Float64Array,
  active: number,
  degreesOfFreedom: number,
): number | null {
  if (!solveSmallSymmetric(normal, gradient, step, active)) return null;
  let projected = 0;
  for (let a = 0; a < active; a++) projected += gradient[a]! * step[a]!;
  return Math.sqrt(Math.max(0, projected) / active / (rss / degreesOfFreedom));
}

function describe(model: RateLawModel): string {
  return model === 'n' ? 'free-order' : ['zero-order', 'first-order', 'second-order'][model]!;
}
