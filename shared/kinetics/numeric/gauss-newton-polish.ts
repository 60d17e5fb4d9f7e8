import { euclideanNorm } from './euclidean-norm.ts';
import { applyQTranspose, householderQr } from './householder-qr.ts';
import { solveSmallSymmetric } from './small-cholesky.ts';
import { solveUpperTriangular } from './solve-upper-triangular.ts';

/** At most this many polishing steps; each normally gains several digits. */
const MAX_POLISH_STEPS = 8;
/** A polishing step is kept only if it at most this much larger than half the previous one. */
const REQUIRED_STEP_CONTRACTION = 0.5;
/** The sum of squares may always rise by this relative amount (rounding noise) when a step is kept. */
const SUM_OF_SQUARES_NOISE = 64 * Number.EPSILON;
/**
 * Units in the last place by which one evaluation of a model (a few exponentials, logarithms or
 * powers) may be off. Each residual then carries an error of about this many ulps of the value
 * it is the difference of, and the sum of squares a rounding noise of 2·Σ|rᵢ|·(that error).
 */
const MODEL_ROUNDING_UNITS = 8;
/**
 * Successive Gauss–Newton steps that shrink by a steady factor above this, in nearly the same direction
 * (|cos| ≥ `PARALLEL_STEPS`), show linear convergence, which eight steps would not finish; near a
 * minimum of a well-fitting model the factor is far smaller (the convergence is nearly quadratic), and
 * where only rounding is left the directions are unrelated.
 */
const LINEAR_CONVERGENCE_RATIO = 0.1;
const PARALLEL_STEPS = 0.9;
/** Relative step of the central differences of the Jacobian in a Newton step: ε^(1/3), the usual balance of truncation and rounding. */
const HESSIAN_DIFFERENCE_STEP = Math.cbrt(Number.EPSILON);
/** Polishing ends when the scaled step is this small relative to the scaled parameters. */
const POLISH_STEP_TOLERANCE = 4 * Number.EPSILON;
/** Columns whose scaled diagonal falls below this fraction of the largest end the polishing. */
const POLISH_RANK_TOLERANCE = 1e-13;

/**
 * Refines a converged nonlinear least-squares solution by full Gauss–Newton steps, as long as
 * the steps keep shrinking geometrically.
 *
 * Why: a trust-region method stops when the relative reduction of the sum of squares reaches
 * its tolerance, but the sum of squares depends quadratically on the parameter error, so a
 * reduction resolved to 1e-15 leaves parameter errors near √1e-15 ≈ 3e-8 of their scale. Near the
 * solution Gauss–Newton converges fast, and its steps themselves (not the sum of squares, which
 * no longer changes in double precision) show when the parameters are settled.
 *
 * Formula in words: with the column-scaled pivoted QR of J at the current point, step =
 * −J⁺·f; keep it when it is at most half the previous step and the sum of squares has not risen
 * beyond rounding noise; stop when the step is a few machine epsilons of the parameters, when a
 * step is rejected, or when J is numerically rank deficient. The rounding noise of the sum of
 * squares is 2·Σ|rᵢ|·eᵢ with eᵢ = `MODEL_ROUNDING_UNITS`·ε·(sᵢ + |rᵢ|), sᵢ = √wᵢ·|yᵢ| the size of
 * the values each residual is the difference of (`valueScales`), and never less than 64·ε·RSS.
 * The size of the values matters, not only the size of the residuals: where the residuals are a
 * thousandth of the values (log-scale rate-law fits with a free order), the sum of squares is
 * noisy at about 1e-12 of itself, a real Gauss–Newton step near the minimum lowers it by less, and
 * a 64·ε bound alone rejected those steps and left parameters 1e-6 short of the minimum (measured
 * against a 50-digit solution; `order/rate-law-solver-agreement.test.ts`).
 *
 * Reference: Å. Björck, "Numerical Methods for Least Squares Problems", SIAM 1996, §9.2.1
 * (Gauss–Newton, local convergence); P. E. Gill, W. Murray, M. H. Wright, "Practical
 * Optimization", Academic Press 1981, §4.7.
 *
 * Throws nothing. Returns the polished parameters, their residual norm and the steps taken.
 *
 * Example: see `levenberg-marquardt.test.ts` (NIST ENSO gains digits in a small parameter).
 */
export function gaussNewtonPolish(
  start: readonly number[],
  startNorm: number,
  residuals: (parameters: readonly number[], out: Float64Array) => void,
  jacobianColumns: (parameters: readonly number[]) => Float64Array[],
  rows: number,
  valueScales: ArrayLike<number>,
  analyticJacobian: boolean,
): { parameters: number[]; residualNorm: number; steps: number; evaluations: number } {
  let parameters = [...start];
  let residualNorm = startNorm;
  let previousStep = Number.POSITIVE_INFINITY;
  let steps = 0;
  let evaluations = 0;
  // The residuals at the current and at the trial point, swapped when a step is kept.
  let residualVector = new Float64Array(rows);
  let trialResiduals = new Float64Array(rows);
  const transformed = new Float64Array(rows);
  residuals(parameters, residualVector);
  evaluations++;
  // Switched on when a Gauss–Newton step shrinks by less than half: from then on, Newton steps.
  let newton = false;
  let firstNewtonStep = false;
  const previousScaledStep = new Float64Array(start.length);
  for (let pass = 0; pass < MAX_POLISH_STEPS; pass++) {
    const columns = jacobianColumns(parameters);
    evaluations++;
    const scales = columns.map((column) => euclideanNorm(column));
    if (scales.some((scale) => !(scale > 0 && Number.isFinite(scale)))) {
      break;
    }
    const parameterLength = euclideanNorm(parameters.map((value, j) => value * scales[j]!));
    const step = new Float64Array(parameters.length);
    let stepLength = Number.NaN;
    if (!newton) {
      columns.forEach((column, j) => {
        for (let i = 0; i < rows; i++) {
          column[i] = column[i]! / scales[j]!;
        }
      });
      const qr = householderQr(columns, rows, true);
      const largest = Math.abs(qr.diagonal[0]!);
      if (qr.diagonal.some((value) => !(Math.abs(value) > POLISH_RANK_TOLERANCE * largest))) {
        break;
      }
      transformed.set(residualVector);
      applyQTranspose(qr, transformed);
      const scaledStep = solveUpperTriangular(qr, transformed);
      for (let k = 0; k < parameters.length; k++) {
        const j = qr.permutation[k]!;
        step[j] = -scaledStep[k]! / scales[j]!;
      }
      stepLength = euclideanNorm(scaledStep);
      if (!Number.isFinite(stepLength)) {
        break;
      }
      const ratio = stepLength / previousStep;
      if (
        analyticJacobian &&
        ratio > LINEAR_CONVERGENCE_RATIO &&
        parallel(step, previousScaledStep, scales)
      ) {
        // Gauss–Newton converges only linearly here (large residuals against the curvature of the
        // model): Newton steps instead, the first one from this point.
        newton = true;
        firstNewtonStep = true;
      } else if (!(ratio <= REQUIRED_STEP_CONTRACTION)) {
        break;
      }
    }
    if (newton) {
      const newtonEvaluations = newtonStep(parameters, residualVector, jacobianColumns, step);
      evaluations += newtonEvaluations;
      if (newtonEvaluations === 0) {
        break;
      }
      stepLength = euclideanNorm(Array.from(step, (value, j) => value * scales[j]!));
      if (!firstNewtonStep && !(stepLength <= REQUIRED_STEP_CONTRACTION * previousStep)) {
        break;
      }
      firstNewtonStep = false;
    }
    const trial = parameters.map((value, j) => value + step[j]!);
    residuals(trial, trialResiduals);
    evaluations++;
    const trialNorm = euclideanNorm(trialResiduals);
    const noise = Math.max(
      SUM_OF_SQUARES_NOISE * residualNorm ** 2,
      sumOfSquaresRounding(residualVector, valueScales) + sumOfSquaresRounding(trialResiduals, valueScales),
    );
    if (!(Number.isFinite(trialNorm) && trialNorm ** 2 <= residualNorm ** 2 + noise)) {
      break;
    }
    parameters = trial;
    residualNorm = trialNorm;
    [residualVector, trialResiduals] = [trialResiduals, residualVector];
    previousStep = stepLength;
    for (let j = 0; j < step.length; j++) previousScaledStep[j] = step[j]! * scales[j]!;
    steps++;
    if (stepLength <= POLISH_STEP_TOLERANCE * parameterLength) {
      break;
    }
  }
  return { parameters, residualNorm, steps, evaluations };
}

/**
 * The Newton step −H⁻¹·Jᵀf for ½‖f‖² at `parameters`, written into `step`, with the Hessian
 * H = JᵀJ + Σ fᵢ·∇²fᵢ: the second term as central differences, along each parameter, of Jᵀf with f
 * held at its current value (Jacobians at θ ± hⱼ·eⱼ, hⱼ = ε^(1/3)·|θⱼ|). Returns the Jacobian
 * evaluations used, or 0 when a differenced Jacobian is not finite or H is not positive definite.
 */
function newtonStep(
  parameters: readonly number[],
  residualVector: Float64Array,
  jacobianColumns: (parameters: readonly number[]) => Float64Array[],
  step: Float64Array,
): number {
  const n = parameters.length;
  const hessian = new Float64Array(n * n);
  const gradient = new Float64Array(n);
  const columns = jacobianColumns(parameters);
  for (let a = 0; a < n; a++) {
    gradient[a] = -dot(columns[a]!, residualVector);
    for (let b = 0; b <= a; b++) {
      hessian[a * n + b] = dot(columns[a]!, columns[b]!);
    }
  }
  for (let a = 0; a < n; a++) for (let b = 0; b < a; b++) hessian[b * n + a] = hessian[a * n + b]!;
  const second = new Float64Array(n * n);
  const shifted = [...parameters];
  for (let b = 0; b < n; b++) {
    const value = parameters[b]!;
    const step = value + HESSIAN_DIFFERENCE_STEP * (value === 0 ? 1 : Math.abs(value)) - value;
    for (const sign of [1, -1]) {
      shifted[b] = value + sign * step;
      const moved = jacobianColumns(shifted);
      for (let a = 0; a < n; a++) {
        const product = dot(moved[a]!, residualVector);
        if (!Number.isFinite(product)) return 0;
        second[a * n + b] = second[a * n + b]! + (sign * product) / (2 * step);
      }
    }
    shifted[b] = value;
  }
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      hessian[a * n + b] = hessian[a * n + b]! + (second[a * n + b]! + second[b * n + a]!) / 2;
    }
  }
  return solveSmallSymmetric(hessian, gradient, step, n) ? 1 + 2 * n : 0;
}

/** |cos| of the angle between `step` (scaled by `scales`) and `previous` is at least `PARALLEL_STEPS`. */
function parallel(step: Float64Array, previous: Float64Array, scales: readonly number[]): boolean {
  let product = 0;
  let stepSquared = 0;
  let previousSquared = 0;
  for (let j = 0; j < step.length; j++) {
    const scaled = step[j]! * scales[j]!;
    product += scaled * previous[j]!;
    stepSquared += scaled * scaled;
    previousSquared += previous[j]! * previous[j]!;
  }
  return Math.abs(product) >= PARALLEL_STEPS * Math.sqrt(stepSquared * previousSquared);
}

function dot(left: Float64Array, right: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < left.length; i++) sum += left[i]! * right[i]!;
  return sum;
}

/** Rounding noise 2·Σ|rᵢ|·eᵢ of a sum of squared residuals, eᵢ = `MODEL_ROUNDING_UNITS`·ε·(sᵢ + |rᵢ|). */
function sumOfSquaresRounding(residualVector: Float64Array, valueScales: ArrayLike<number>): number {
  let noise = 0;
  for (let i = 0; i < residualVector.length; i++) {
    const residual = Math.abs(residualVector[i]!);
    noise += 2 * residual * MODEL_ROUNDING_UNITS * Number.EPSILON * (valueScales[i]! + residual);
  }
  return noise;
}
