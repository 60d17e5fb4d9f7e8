/**
 * Decision (for the contributor guide): Levenberg–Marquardt is written here, as a port of Moré's
 * MINPACK-1 `lmder` (scaled trust region, pivoted QR of the Jacobian) followed by a Gauss–Newton
 * polish, because the maintained JavaScript package (ml-levenberg-marquardt 5.1) returns no
 * covariance and throws with default options. Measured with `npx tsx tests/bench/nist-digits.ts`
 * (analytic Jacobians): all 19 lower/average NIST StRD nonlinear problems converge from both
 * starts with ≥ 6.8 significant digits in every parameter (ENSO; every other problem ≥ 10.3) and
 * ≥ 8.0 in every certified standard deviation (Lanczos1's standard deviations: ≈ 3.4 digits, the
 * limit of double precision for its 1e-25 RSS); all 8 higher-difficulty problems converge from
 * both starts with ≥ 7.6 and ≥ 7.0 digits. With central differences: ≥ 6.7 and ≥ 7.1 (lower/
 * average), ≥ 7.4 and ≥ 6.7 (higher), and BoxBOD start 1 reports converged: false. The same bench
 * prints how closely the product's rate-law fitter agrees with this solver.
 */
import { assertFiniteNumbers, assertValidWeights } from './assert-finite-numbers.ts';
import { KineticsError } from './kinetics-error.ts';
import { type LevenbergMarquardtState, runLevenbergMarquardt } from './levenberg-marquardt-iteration.ts';
import { nonlinearCovariance } from './nonlinear-covariance.ts';
import { numericGradient } from './numeric-jacobian.ts';

/** A nonlinear least-squares problem: minimise Σ wᵢ·(yᵢ − model(parameters, xᵢ))². */
export interface NonlinearProblem {
  /** The model at one observation; `index` (its position) lets a model read further predictors. */
  model: (parameters: readonly number[], x: number, index: number) => number;
  /** ∂model/∂parameters at one observation; central differences are used when absent. */
  jacobian?: (parameters: readonly number[], x: number, index: number) => number[];
  x: readonly number[];
  y: readonly number[];
  /** Positive weights, e.g. 1/σᵢ²; all 1 when absent. */
  weights?: readonly number[];
  initial: readonly number[];
}

export interface LmOptions {
  /** Most Jacobian evaluations (outer iterations); default 1000. */
  maxIterations?: number;
  /** Most model evaluations of trial points; default 100·(parameters + 1)·10. */
  maxFunctionEvaluations?: number;
  /** Converged when actual and predicted relative reductions of the RSS are both below this. */
  relativeReductionTolerance?: number;
  /** Converged when the trust region is below this fraction of the scaled parameter length. */
  relativeStepTolerance?: number;
  /** Converged when the cosine between residuals and every Jacobian column is below this. */
  gradientTolerance?: number;
  /** Initial trust-region radius as a multiple of the scaled initial parameter length. */
  initialStepFactor?: number;
}

/** Result of `levenbergMarquardt`. When `converged` is true every number is finite. */
export interface NonlinearFit {
  parameters: number[];
  /** √diag(covariance); empty when not converged and the covariance could not be formed. */
  standardErrors: number[];
  /** s²·(JᵀWJ)⁻¹ at the solution; empty when it could not be formed. */
  covariance: number[][];
  residualSumOfSquares: number;
  /** n − p. */
  degreesOfFreedom: number;
  residualStandardDeviation: number;
  /** Outer iterations (Jacobian evaluations). */
  iterations: number;
  functionEvaluations: number;
  converged: boolean;
  /** Why the iteration stopped, in words. */
  reason: string;
  /**
   * 'limited-by-rounding' when the residuals are so small that rounding the model values to
   * double already changes them by more than `ROUNDING_LIMITED_RESIDUAL_FRACTION` of their size:
   * the parameters stand, but the standard errors (which scale with √RSS) carry fewer digits.
   * Said rather than left silent (NIST StRD Lanczos1 is such a problem).
   */
  standardErrorPrecision: 'full' | 'limited-by-rounding';
}

/** Rounding of the model values may move the residuals by at most this fraction before we say so. */
export const ROUNDING_LIMITED_RESIDUAL_FRACTION = 1e-4;

/** Half a unit in the last place of a double: the largest error of rounding a value to double. */
function halfUnitInLastPlace(value: number): number {
  return value === 0 ? 0 : 2 ** (Math.floor(Math.log2(Math.abs(value))) - 53);
}

/** Defaults, chosen on the NIST StRD suite: tight enough for 6+ digits on every certified problem. */
const DEFAULT_RELATIVE_REDUCTION_TOLERANCE = 1e-15;
const DEFAULT_RELATIVE_STEP_TOLERANCE = 1e-15;
const DEFAULT_GRADIENT_TOLERANCE = 1e-15;
const DEFAULT_MAX_ITERATIONS = 1000;
const DEFAULT_INITIAL_STEP_FACTOR = 100;

/**
 * Nonlinear least squares by the Levenberg–Marquardt method: the parameters minimising
 * Σ wᵢ·(yᵢ − model(parameters, xᵢ))², with standard errors from s²·(JᵀWJ)⁻¹.
 *
 * Why: integrated rate laws fitted to untransformed concentrations (C = C₀·e^(−kt), the n-th order
 * form, Weibull) are nonlinear in their parameters. Gauss–Newton alone diverges from poor starts;
 * Levenberg–Marquardt blends it with steepest descent inside a trust region that shrinks when a
 * step fails and grows when the quadratic model predicts well.
 *
 * Formula in words: at each iteration factorize the weighted Jacobian J·P = Q·R; find the step
 * minimising ‖J·step + f‖ subject to ‖D·step‖ ≤ Δ (D the running column lengths of J) by
 * `levenbergMarquardtParameter`; accept it when the actual reduction of the RSS is at least
 * 1e-4 of the predicted one; rescale Δ by the agreement ratio. Stop when the relative reduction,
 * the relative step or the gradient cosine falls below its tolerance.
 *
 * Reference: J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and theory",
 * Lecture Notes in Mathematics 630 (1978) 105–116; MINPACK-1 User Guide ANL-80-74
 * (https://www.netlib.org/minpack/); checked against NIST StRD nonlinear regression.
 *
 * Never throws for numerical failure: iteration limit, non-finite model values at the start or
 * at the solution, and a singular Jacobian give `converged: false` with a `reason`. Throws
 * `KineticsError('invalid-input')` for malformed input and 'too-few-points' when n ≤ p.
 *
 * Example: y = 2·e^(−0.5x) sampled without noise at x = 0…5 and started from [1, 1] converges to
 * [2, 0.5] with standard errors 0.
 */
export function levenbergMarquardt(problem: NonlinearProblem, options: LmOptions = {}): NonlinearFit {
  const { x, y, weights, initial, model } = problem;
  validateProblem(problem);
  const parameterCount = initial.length;
  const rows = y.length;
  const rootWeights = new Float64Array(rows);
  const valueScales = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    rootWeights[i] = weights === undefined ? 1 : Math.sqrt(weights[i]!);
    valueScales[i] = rootWeights[i]! * Math.abs(y[i]!);
  }
  const gradient =
    problem.jacobian ?? ((p: readonly number[], xi: number, i: number) => numericGradient(model, p, xi, i));
  const residuals = (parameters: readonly number[], out: Float64Array): void => {
    for (let i = 0; i < rows; i++) {
      out[i] = rootWeights[i]! * (model(parameters, x[i]!, i) - y[i]!);
    }
  };
  // One set of columns, refilled on every call: each caller is done with a Jacobian (and its QR
  // factorization, which overwrites it) before it asks for the next, and this saves an allocation
  // of m·p numbers per iteration.
  const columns = Array.from({ length: parameterCount }, () => new Float64Array(rows));
  const jacobianColumns = (parameters: readonly number[]): Float64Array[] => {
    for (let i = 0; i < rows; i++) {
      const row = gradient(parameters, x[i]!, i);
      for (let j = 0; j < parameterCount; j++) {
        columns[j]![i] = rootWeights[i]! * (row[j] ?? Number.NaN);
      }
    }
    return columns;
  };
  const state: LevenbergMarquardtState = runLevenbergMarquardt(initial, residuals, jacobianColumns, rows, {
    maxIterations: options.maxIterations ?? DEFAULT_MAX_ITERATIONS,
    maxFunctionEvaluations: options.maxFunctionEvaluations ?? 1000 * (parameterCount + 1),
    relativeReductionTolerance: options.relativeReductionTolerance ?? DEFAULT_RELATIVE_REDUCTION_TOLERANCE,
    relativeStepTolerance: options.relativeStepTolerance ?? DEFAULT_RELATIVE_STEP_TOLERANCE,
    gradientTolerance: options.gradientTolerance ?? DEFAULT_GRADIENT_TOLERANCE,
    initialStepFactor: options.initialStepFactor ?? DEFAULT_INITIAL_STEP_FACTOR,
    valueScales,
    analyticJacobian: problem.jacobian !== undefined,
  });
  const degreesOfFreedom = rows - parameterCount;
  const residualVariance = state.residualSumOfSquares / degreesOfFreedom;
  const result: NonlinearFit = {
    parameters: [...state.parameters],
    standardErrors: [],
    covariance: [],
    residualSumOfSquares: state.residualSumOfSquares,
    degreesOfFreedom,
    residualStandardDeviation: Math.sqrt(residualVariance),
    iterations: state.iterations,
    functionEvaluations: state.functionEvaluations,
    converged: state.converged,
    reason: state.reason,
    standardErrorPrecision: 'full',
  };
  if (!Number.isFinite(state.residualSumOfSquares)) {
    return { ...result, residualSumOfSquares: 0, residualStandardDeviation: 0, converged: false };
  }
  const covariance = nonlinearCovariance(jacobianColumns(state.parameters), residualVariance);
  if (!covariance.ok) {
    return { ...result, converged: false, reason: `${state.reason}; ${covariance.reason}` };
  }
  let largestRounding = 0;
  for (let i = 0; i < rows; i++) {
    const value = model(state.parameters, x[i]!, i);
    // √wᵢ·|value|·2⁻⁵³ bounds √wᵢ·(half an ulp of value) from above (exactly, in floating point),
    // so a point whose bound does not exceed the largest so far cannot change it.
    if (rootWeights[i]! * Math.abs(value) * 2 ** -53 <= largestRounding) continue;
    largestRounding = Math.max(largestRounding, rootWeights[i]! * halfUnitInLastPlace(value));
  }
  const rmsResidual = Math.sqrt(state.residualSumOfSquares / rows);
  const limited = largestRounding > ROUNDING_LIMITED_RESIDUAL_FRACTION * rmsResidual;
  return {
    ...result,
    covariance: covariance.covariance,
    standardErrors: covariance.standardErrors,
    ...(limited
      ? {
          standardErrorPrecision: 'limited-by-rounding' as const,
          reason: `${state.reason}; the residuals are within ${Math.round(rmsResidual / (2 * largestRounding))} units in the last place of the fitted values, so the standard errors carry only about ${Math.max(1, Math.floor(-Math.log10((2 * largestRounding) / rmsResidual)))} significant digits`,
        }
      : {}),
  };
}

function validateProblem(problem: NonlinearProblem): void {
  const { x, y, weights, initial } = problem;
  if (x.length !== y.length) {
    throw new KineticsError('invalid-input', `There are ${x.length} x values for ${y.length} y values.`, {
      x: x.length,
      y: y.length,
    });
  }
  if (initial.length === 0) {
    throw new KineticsError('invalid-input', 'There are no parameters to fit.', {});
  }
  assertFiniteNumbers(x, 'x');
  assertFiniteNumbers(y, 'y');
  assertFiniteNumbers(initial, 'initial');
  if (weights !== undefined) {
    assertValidWeights(weights, y.length);
  }
  if (y.length <= initial.length) {
    throw new KineticsError(
      'too-few-points',
      `A model with ${initial.length} parameters needs more than ${initial.length} points; got ${y.length}.`,
      { n: y.length, p: initial.length },
    );
  }
}
