import { KineticsError } from '../numeric/kinetics-error.ts';
import { solveSmallSymmetric } from '../numeric/small-cholesky.ts';
import type { RateLawModel } from '../types.ts';
import { initialRateOf, rateConstantOf } from './initial-rate-form.ts';
import { type NormalEquations, rateLawObjective } from './rate-law-objective.ts';
import type { RateLawStart } from './rate-law-start.ts';

/**
 * The first stage of a rate-law fit: Marquardt-damped Gauss–Newton on streamed 2×2/3×3 normal equations,
 * then undamped Gauss–Newton steps while they keep halving. `fitRateLaw` reports its answer when its
 * remaining step (`remainingRelativeStep`) is at most 1e-11 of every free parameter, and otherwise finishes
 * the fit with the NIST-checked `levenbergMarquardt` from the point returned here.
 *
 * Why a streamed stage: the NIST-checked solver builds a Jacobian row per point per iteration; from the
 * product's starting values (the linearised plots) a fit takes 5–40 iterations, which on a 10⁵-point series
 * fitted five or six times costs more than the speed target allows. This stage streams the normal
 * equations without allocation.
 *
 * Formula in words: from the start, repeat: form JᵀJ and Jᵀr (`rate-law-objective.ts`); solve
 * (JᵀJ + λ·diag JᵀJ)·δ = Jᵀr; accept the step when the residual sum of squares falls (then λ shrinks
 * tenfold), otherwise raise λ tenfold. Stop when the Bates–Watts relative offset √(rᵀP r/p)/√(rᵀr/(N − p)),
 * P the projection onto the tangent plane, is below `RELATIVE_OFFSET_TOLERANCE` (the parameters are then
 * within about 1e-6 standard errors of the minimum), or — within `ROUNDING_OFFSET_TOLERANCE` — when no step
 * lowers the sum of squares or an accepted one lowers it by less than `STALLED_RELATIVE_DECREASE`. The
 * free order is iterated in initial-rate form (C0, r0 = k·C0ⁿ, n), which is far better conditioned at low
 * conversion, and returned in that form. n is kept in `ORDER_SEARCH_RANGE`; once a step is stopped at a
 * limit, n stays there. Series above 5000 points start from this stage run on a 1000-point subsample; a
 * zero-order line that reaches 0 inside the data extends accepted steps by doubling (past its end the
 * derivatives vanish, so Gauss–Newton undershoots the end point).
 *
 * Reference: D. W. Marquardt, J. Soc. Ind. Appl. Math. 11 (1963) 431–441; D. M. Bates & D. G. Watts,
 * Nonlinear Regression Analysis and Its Applications (1988) §2.2.3 (relative offset criterion).
 *
 * `response` holds the values on the fitting scale (ln values when `logScale`). An infeasible start is
 * repaired by halving k (an infeasible start is almost always a rate constant too large for the time span).
 * Throws `KineticsError('not-converged')` when no feasible start can be found.
 *
 * Example: order 1 on (0, 100), (1, 50), (2, 25) from (90, 0.5) returns (100, ln 2) with reason 'exact fit'.
 */

export interface RateLawApproach {
  /** (C0, k, n) for orders 0/1/2 (n the order); (C0, r0, n) in initial-rate form for the free order. */
  parameters: [number, number, number];
  iterations: number;
  converged: boolean;
  /** Free order only: a step was stopped at an end of `ORDER_SEARCH_RANGE`, and n stayed there. */
  atSearchLimit: boolean;
  reason: string;
  /** Residual sum of squares at `parameters`, on the fitting scale. */
  residualSumOfSquares: number;
  /**
   * Largest |δₐ|/|θₐ| of the undamped Gauss–Newton step δ at `parameters` over the parameters still free
   * (in the form returned): how far, relatively, the answer may still be from the minimum. Infinite when
   * JᵀJ is singular there; 0 for an exact fit.
   */
  remainingRelativeStep: number;
}

/** Bates–Watts relative offset below which this stage stops (they suggest 1e-3 for a final answer). */
export const RELATIVE_OFFSET_TOLERANCE = 1e-6;
/** Relative offset that rounding in sums over 10⁵ points can leave; below it a failed step ends the stage. */
const ROUNDING_OFFSET_TOLERANCE = 1e-3;
/**
 * An accepted step that lowers the RSS by less than this fraction, near the minimum (offset below
 * `ROUNDING_OFFSET_TOLERANCE`), ends the stage: on long series with a zero-order end point the RSS has a
 * tiny kink at every point the end passes, and further steps only creep between them.
 */
const STALLED_RELATIVE_DECREASE = 1e-9;
/** A residual sum of squares this small relative to Σy² is an exact fit. */
const EXACT_FIT_TOLERANCE = 1e-26;
const MAX_ITERATIONS = 200;
const INITIAL_DAMPING = 1e-3;
const MAX_DAMPING = 1e16;
/** Gauss–Newton continuation (`continueGaussNewton`): at most this many steps, down to this offset. */
const MAX_CONTINUATION_STEPS = 40;
const CONTINUATION_OFFSET = 1e-13;
/** Relative rise of the sum of squares that rounding can cause (log-scale residuals ~1e-3 of the values). */
const CONTINUATION_RSS_NOISE = 1e-12;
/** Halvings of k tried to make an infeasible start feasible. */
export const START_REPAIR_HALVINGS = 60;
/**
 * Above this many points the stage first runs on an evenly spaced subsample of about `WARM_START_POINTS`
 * points and starts from that answer: the subsample sees the same curve at a fraction of the cost.
 */
export const WARM_START_MIN_POINTS = 5000;
const WARM_START_POINTS = 1000;
/** The free order is searched on this interval. */
export const ORDER_SEARCH_RANGE: readonly [number, number] = [-1, 5];

export function approachRateLawMinimum(
  model: RateLawModel,
  times: ArrayLike<number>,
  response: Float64Array,
  logScale: boolean,
  initialStart: RateLawStart,
): RateLawApproach {
  const pointCount = times.length;
  const p: 2 | 3 = model === 'n' ? 3 : 2;
  let sumOfSquaresOfResponse = 0;
  for (let i = 0; i < pointCount; i++) sumOfSquaresOfResponse += response[i]! ** 2;
  const objective = rateLawObjective(model, times, response, logScale);
  const start =
    pointCount > WARM_START_MIN_POINTS
      ? warmStart(model, times, response, logScale, initialStart)
      : initialStart;

  // The free order is iterated in initial-rate form (C0, r0 = k·C0ⁿ, n); see `initialRateLawAt`.
  const freeOrder = model === 'n';
  const startOrder = freeOrder ? (start.n ?? 1) : model;
  const theta = new Float64Array([
    start.initialValue,
    freeOrder ? initialRateOf(start.initialValue, start.rateConstant, startOrder) : start.rateConstant,
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
  for (let attempt = 0; Number.isNaN(current.rss) && attempt < START_REPAIR_HALVINGS; attempt++) {
    theta[1] = theta[1]! / 2;
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
  if (converged && reason !== 'exact fit') {
    iterations += continueGaussNewton(objective, theta, current, trial, active, degreesOfFreedom, p);
  }
  const remainingRelativeStep = reason === 'exact fit' ? 0 : relativeStep(current, theta, p, active);
  return {
    parameters: [theta[0]!, theta[1]!, theta[2]!],
    iterations,
    converged,
    atSearchLimit,
    reason,
    residualSumOfSquares: current.rss,
    remainingRelativeStep,
  };
}

/** max |δₐ|/|θₐ| of the undamped Gauss–Newton step at `theta` (from its normal equations `current`). */
function relativeStep(current: NormalEquations, theta: Float64Array, p: number, active: number): number {
  const block = new Float64Array(active * active);
  const step = new Float64Array(active);
  leadingBlock(current.normal, p, active, block);
  if (!solveSmallSymmetric(block, current.gradient, step, active)) return Number.POSITIVE_INFINITY;
  let largest = 0;
  for (let a = 0; a < active; a++) largest = Math.max(largest, Math.abs(step[a]!) / Math.abs(theta[a]!));
  return Number.isNaN(largest) ? Number.POSITIVE_INFINITY : largest;
}

/**
 * Undamped Gauss–Newton steps from a converged point while each step is at most half the previous one in
 * standard errors (the relative offset halves), the sum of squares rises by no more than rounding, and the
 * offset is above `CONTINUATION_OFFSET`. Near the minimum the sum of squares no longer resolves the steps,
 * but their shrinking does; on fits with large residuals (a wrong order) Gauss–Newton converges only
 * linearly, and these steps, at one streamed pass each, leave the final solver its last one or two.
 * Returns the number of steps taken; `theta` and `current` hold the last point kept.
 */
function continueGaussNewton(
  objective: ReturnType<typeof rateLawObjective>,
  theta: Float64Array,
  current: NormalEquations & { rss: number },
  trial: NormalEquations & { rss: number },
  active: number,
  degreesOfFreedom: number,
  p: number,
): number {
  const block = new Float64Array(p * p);
  const step = new Float64Array(p);
  const candidate = new Float64Array(3);
  let previousOffset = Number.POSITIVE_INFINITY;
  let steps = 0;
  for (; steps < MAX_CONTINUATION_STEPS; steps++) {
    leadingBlock(current.normal, p, active, block);
    const offset = relativeOffset(block, current.gradient, current.rss, step, active, degreesOfFreedom);
    if (offset === null || offset < CONTINUATION_OFFSET || !(offset <= 0.5 * previousOffset)) break;
    candidate.set(theta);
    for (let a = 0; a < active; a++) candidate[a] = theta[a]! + step[a]!;
    trial.rss = objective(candidate, trial);
    if (!(trial.rss <= current.rss * (1 + CONTINUATION_RSS_NOISE))) break;
    theta.set(candidate);
    // Keep the trial's sums as the current ones (swap the buffers).
    const { normal, gradient, rss } = trial;
    trial.normal = current.normal;
    trial.gradient = current.gradient;
    current.normal = normal;
    current.gradient = gradient;
    current.rss = rss;
    previousOffset = offset;
  }
  return steps;
}

function warmStart(
  model: RateLawModel,
  times: ArrayLike<number>,
  response: Float64Array,
  logScale: boolean,
  start: RateLawStart,
): RateLawStart {
  const stride = Math.ceil(times.length / WARM_START_POINTS);
  const sampledTimes: number[] = [];
  const sampledResponse: number[] = [];
  for (let i = 0; i < times.length; i += stride) {
    sampledTimes.push(times[i]!);
    sampledResponse.push(response[i]!);
  }
  try {
    const rough = approachRateLawMinimum(
      model,
      sampledTimes,
      Float64Array.from(sampledResponse),
      logScale,
      start,
    );
    const [initialValue, rate, n] = rough.parameters;
    return { initialValue, rateConstant: model === 'n' ? rateConstantOf(initialValue, rate, n) : rate, n };
  } catch {
    return start; // the full series reports its own problem
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

export function describe(model: RateLawModel): string {
  return model === 'n' ? 'free-order' : ['zero-order', 'first-order', 'second-order'][model]!;
}
