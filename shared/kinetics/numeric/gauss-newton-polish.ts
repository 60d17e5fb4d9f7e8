import { euclideanNorm } from './euclidean-norm.ts';
import { applyQTranspose, householderQr } from './householder-qr.ts';
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
): { parameters: number[]; residualNorm: number; steps: number; evaluations: number } {
  let parameters = [...start];
  let residualNorm = startNorm;
  let previousStep = Number.POSITIVE_INFINITY;
  let steps = 0;
  let evaluations = 0;
  const residualVector = new Float64Array(rows);
  residuals(parameters, residualVector);
  evaluations++;
  for (let pass = 0; pass < MAX_POLISH_STEPS; pass++) {
    const columns = jacobianColumns(parameters);
    evaluations++;
    const scales = columns.map((column) => euclideanNorm(column));
    if (scales.some((scale) => !(scale > 0 && Number.isFinite(scale)))) {
      break;
    }
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
    const transformed = Float64Array.from(residualVector);
    applyQTranspose(qr, transformed);
    const scaledStep = solveUpperTriangular(qr, transformed);
    const step = new Float64Array(parameters.length);
    for (let k = 0; k < parameters.length; k++) {
      const j = qr.permutation[k]!;
      step[j] = -scaledStep[k]! / scales[j]!;
    }
    const stepLength = euclideanNorm(scaledStep);
    const parameterLength = euclideanNorm(parameters.map((value, j) => value * scales[j]!));
    if (!(stepLength <= REQUIRED_STEP_CONTRACTION * previousStep) || !Number.isFinite(stepLength)) {
      break;
    }
    const trial = parameters.map((value, j) => value + step[j]!);
    const trialResiduals = new Float64Array(rows);
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
    residualVector.set(trialResiduals);
    previousStep = stepLength;
    steps++;
    if (stepLength <= POLISH_STEP_TOLERANCE * parameterLength) {
      break;
    }
  }
  return { parameters, residualNorm, steps, evaluations };
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
