import { KineticsError } from '../numeric/kinetics-error.ts';
import { levenbergMarquardt, type NonlinearFit } from '../numeric/levenberg-marquardt.ts';
import { nonlinearCovariance } from '../numeric/nonlinear-covariance.ts';
import type { ErrorModel, RateLawModel } from '../types.ts';
import {
  approachRateLawMinimum,
  describe,
  ORDER_SEARCH_RANGE,
  type RateLawApproach,
} from './approach-rate-law-minimum.ts';
import { rateConstantFormCovariance, rateConstantOf } from './initial-rate-form.ts';
import { rateLawJacobianColumns } from './rate-law-objective.ts';
import { rateLawProblem } from './rate-law-problem.ts';
import type { RateLawStart } from './rate-law-start.ts';

export type { RateLawModel } from '../types.ts';
export { ORDER_SEARCH_RANGE } from './approach-rate-law-minimum.ts';
export type { RateLawStart } from './rate-law-start.ts';

/**
 * Fits an integrated rate law (order 0, 1, 2, or a free order n) to a series on its original scale
 * by nonlinear least squares, with analytic derivatives. The answer is the minimum the NIST-checked
 * Levenberg–Marquardt (`numeric/levenberg-marquardt.ts`) finds, to at least 9 significant digits in every
 * parameter and standard error on every benchmark series (`order/rate-law-solver-agreement.test.ts`,
 * `tests/integration/nist-checked-rate-law-fits.test.ts`); the covariance is that solver's own QR-based one.
 *
 * Why: fitting the untransformed values keeps the measurement error where it is, so the estimates
 * and their standard errors mean what they say (Motulsky & Christopoulos 2003, "Avoid Scatchard,
 * Lineweaver-Burk and similar transforms"; docs/methods.md#rate-law-fits). Why two stages: the NIST-checked
 * solver builds a Jacobian per iteration and would double the time of a 10⁵-point analysis; the streamed
 * first stage reaches the same minimum at a fraction of the cost, and where it cannot show that it has
 * (its remaining step), the NIST-checked solver finishes the fit.
 *
 * Error models:
 * - 'constant' (same SD at every value): minimise Σ (yᵢ − C(tᵢ))², unweighted.
 * - 'proportional' (same relative SD): minimise Σ (ln yᵢ − ln C(tᵢ))², i.e. fit on the log scale.
 *   This is the maximum-likelihood fit for log-normal error and, to first order, the same as weights
 *   1/ŷᵢ², without re-weighting iterations. Every value must then be positive.
 *
 * Formula in words: two stages on the same objective (`rate-law-problem.ts`).
 * 1. `approachRateLawMinimum` (streamed 2×2/3×3 normal equations, Marquardt damping, then undamped
 *    Gauss–Newton steps while they keep halving) converges without building a Jacobian. When it converged
 *    and its remaining undamped Gauss–Newton step is at most `CERTIFIED_RELATIVE_STEP` (1e-11) of every free
 *    parameter, its parameters and residual sum of squares are reported, with the covariance s²·(JᵀJ)⁻¹,
 *    s² = RSS/(N − p), from the QR factorisation of the Jacobian there (`nonlinear-covariance.ts`, the
 *    NIST-checked solver's own).
 * 2. Otherwise (Gauss–Newton converging only linearly: large residuals against the curvature of the model)
 *    `levenbergMarquardt` (MINPACK `lmder` port with its Gauss–Newton and Newton polish) starts from stage 1's
 *    answer, converges to its own tolerances, and its parameters, RSS and covariance are reported.
 * The free order is solved in initial-rate form (C0, r0 = k·C0ⁿ, n) and reported in (C0, k, n)
 * (`initial-rate-form.ts`). When stage 1 stopped n at an end of `ORDER_SEARCH_RANGE`, or stage 2 would leave
 * the range, n is held at that end, the covariance of (C0, k, n) is formed there (QR, with N − 3 degrees of
 * freedom) and the fit says "the data do not determine the order".
 *
 * Reference: J. J. Moré, Lecture Notes in Mathematics 630 (1978) 105–116 (the solver); D. M. Bates &
 * D. G. Watts, Nonlinear Regression Analysis and Its Applications (1988) §2.2–2.3 (covariance).
 * Validation: `numeric/levenberg-marquardt.test.ts` (NIST StRD), `order/rate-law-solver-agreement.test.ts` and
 * `tests/integration/nist-checked-rate-law-fits.test.ts` (every benchmark series against the NIST-checked
 * solver run alone from the product's starting values, 1e-9 relative).
 *
 * Throws `KineticsError('too-few-points')` when N ≤ number of parameters,
 * `KineticsError('non-positive-value')` for the proportional model with a value ≤ 0, and
 * `KineticsError('not-converged')` when no feasible start can be found.
 *
 * Example: `fitRateLaw(1, [0, 1, 2], [100, 50, 25], 'constant', { initialValue: 90, rateConstant: 0.5 })`
 * gives initialValue 100 and rateConstant ln 2 = 0.6931 (an exact fit).
 */

export interface RateLawFit {
  model: RateLawModel;
  errorModel: ErrorModel;
  initialValue: number;
  rateConstant: number;
  /** The order: fixed for 0/1/2, fitted for 'n'. */
  n: number;
  parameterCount: 2 | 3;
  /** Row-major covariance of (C0, k[, n]); null when the Jacobian is singular at the answer. */
  covariance: number[] | null;
  standardErrors: number[] | null;
  /** On the fitting scale (values, or natural logarithms of values). */
  residualSumOfSquares: number;
  degreesOfFreedom: number;
  residualStandardDeviation: number;
  pointCount: number;
  /** Gaussian log-likelihood of the values on their original scale at the maximum-likelihood σ. */
  logLikelihood: number;
  /** Iterations of both stages (stage 1 steps plus any Levenberg–Marquardt Jacobian evaluations). */
  iterations: number;
  converged: boolean;
  /** Free order only: n is held at an end of `ORDER_SEARCH_RANGE` (the data do not determine n). */
  atSearchLimit: boolean;
  reason: string;
}

export function fitRateLaw(
  model: RateLawModel,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  errorModel: ErrorModel,
  start: RateLawStart,
): RateLawFit {
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
  }
  const approach = approachRateLawMinimum(model, times, response, logScale, start);
  const [startValue, startRate, startOrder] = approach.parameters;
  let fixedOrder = model === 'n' && approach.atSearchLimit ? startOrder : null;
  let fit: SolvedFit;
  if (certifiedByFirstStage(approach)) {
    fit = streamedAnswer(model, times, logScale, fixedOrder, approach);
  } else {
    const polishAt = (order: number | null) =>
      polish(model, times, response, logScale, order, [startValue, startRate, order ?? startOrder]);
    fit = polishAt(fixedOrder);
    if (model === 'n' && fixedOrder === null && outsideSearchRange(fit.parameters[2]!)) {
      fixedOrder = Math.min(ORDER_SEARCH_RANGE[1], Math.max(ORDER_SEARCH_RANGE[0], fit.parameters[2]!));
      fit = polishAt(fixedOrder);
    }
  }
  // The solver's parameters: (C0, k) for orders 0–2, (C0, r0[, n]) for the free order.
  const solved = [
    fit.parameters[0]!,
    fit.parameters[1]!,
    model === 'n' ? (fixedOrder ?? fit.parameters[2]!) : model,
  ];
  const degreesOfFreedom = pointCount - p;
  const rss = fit.residualSumOfSquares;
  const residualVariance = rss / degreesOfFreedom;
  let covariance: number[][] | null = null;
  let reason = fit.reason;
  if (fixedOrder === null) {
    if (fit.covariance.length === p) covariance = fit.covariance;
  } else if (fit.converged) {
    // n held at the limit: the covariance of (C0, r0, n) there, as if n were free (N − 3 degrees of freedom).
    const columns = rateLawJacobianColumns(model, times, logScale, solved, 3);
    const atLimit = nonlinearCovariance(columns, residualVariance);
    if (atLimit.ok) covariance = atLimit.covariance;
    else reason = `${reason}; ${atLimit.reason}`;
  }
  const parameters = solved;
  if (model === 'n') {
    // Reported in (C0, k, n): k = r0·C0^(−n), and the covariance carried over exactly (`initial-rate-form.ts`).
    const [initialValue, initialRate, n] = solved as [number, number, number];
    parameters[1] = rateConstantOf(initialValue, initialRate, n);
    if (covariance !== null)
      covariance = rateConstantFormCovariance(initialValue, initialRate, n, covariance);
  }
  const converged = fit.converged && covariance !== null;
  if (converged && fixedOrder !== null) {
    reason = `the data do not determine the order: the fit stopped at the search limit n = ${fixedOrder}`;
  }
  const flat = covariance === null ? null : covariance.flat();
  const standardErrors =
    flat === null ? null : Array.from({ length: p }, (_, a) => Math.sqrt(Math.max(0, flat[a * p + a]!)));
  const logLikelihood =
    (-pointCount / 2) * (Math.log((2 * Math.PI * Math.max(rss, Number.MIN_VALUE)) / pointCount) + 1) -
    sumOfLogValues;
  return {
    model,
    errorModel,
    initialValue: parameters[0]!,
    rateConstant: parameters[1]!,
    n: parameters[2]!,
    parameterCount: p,
    covariance: flat,
    standardErrors,
    residualSumOfSquares: rss,
    degreesOfFreedom,
    residualStandardDeviation: Math.sqrt(residualVariance),
    pointCount,
    logLikelihood,
    iterations: approach.iterations + fit.iterations,
    converged,
    atSearchLimit: fixedOrder !== null,
    reason,
  };
}

/**
 * The first stage's answer is reported as it stands when its remaining undamped Gauss–Newton step is at
 * most this fraction of every free parameter: the distance to the minimum is then about that step
 * (Gauss–Newton converges quadratically there), a hundred times inside the 1e-9 relative agreement with
 * the NIST-checked solver that `rate-law-solver-agreement.test.ts` requires.
 */
export const CERTIFIED_RELATIVE_STEP = 1e-11;

/** The first stage converged and its remaining step is within `CERTIFIED_RELATIVE_STEP`: its answer is reported. */
export function certifiedByFirstStage(approach: RateLawApproach): boolean {
  return approach.converged && approach.remainingRelativeStep <= CERTIFIED_RELATIVE_STEP;
}

/** What `fitRateLaw` reads from either stage, in the solver's parameters. */
type SolvedFit = Pick<
  NonlinearFit,
  'parameters' | 'residualSumOfSquares' | 'covariance' | 'converged' | 'reason' | 'iterations'
>;

/** The first stage's answer, with the QR-based covariance of the NIST-checked solver (`nonlinearCovariance`). */
function streamedAnswer(
  model: RateLawModel,
  times: ArrayLike<number>,
  logScale: boolean,
  fixedOrder: number | null,
  approach: RateLawApproach,
): SolvedFit {
  const free = fixedOrder === null ? (model === 'n' ? 3 : 2) : 2;
  const parameters = approach.parameters.slice(0, free);
  const rss = approach.residualSumOfSquares;
  let covariance: number[][] = [];
  let reason = approach.reason;
  if (fixedOrder === null) {
    const columns = rateLawJacobianColumns(model, times, logScale, approach.parameters, free);
    const computed = nonlinearCovariance(columns, rss / (times.length - free));
    if (computed.ok) covariance = computed.covariance;
    else reason = `${reason}; ${computed.reason}`;
  }
  return {
    parameters,
    residualSumOfSquares: rss,
    covariance,
    converged: true,
    reason,
    iterations: 0,
  };
}

function outsideSearchRange(n: number): boolean {
  return n < ORDER_SEARCH_RANGE[0] || n > ORDER_SEARCH_RANGE[1];
}

/** Stage 2, when stage 1 is not certified: the NIST-checked solver from its answer, n held at `fixedOrder` when set. */
function polish(
  model: RateLawModel,
  times: ArrayLike<number>,
  response: Float64Array,
  logScale: boolean,
  fixedOrder: number | null,
  start: readonly [number, number, number],
): SolvedFit {
  const problem = rateLawProblem(model, times, response, logScale, fixedOrder);
  const fit = levenbergMarquardt({ ...problem, initial: start.slice(0, problem.parameterCount) });
  // Only an infeasible start ends after 0 iterations. Stage 1 never returns one (its objective is this
  // one, and it keeps feasible points only), so this is a guard, not a path.
  if (fit.iterations === 0) {
    throw new KineticsError('not-converged', `No feasible starting point for the ${describe(model)} fit.`, {
      model,
    });
  }
  return fit;
}
