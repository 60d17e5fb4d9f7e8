import { euclideanNorm } from './euclidean-norm.ts';
import { gaussNewtonPolish } from './gauss-newton-polish.ts';
import { householderQr } from './householder-qr.ts';
import { levenbergMarquardtParameter } from './levenberg-marquardt-parameter.ts';

/** Settings of one run; `levenbergMarquardt` fills in the defaults. */
export interface LevenbergMarquardtSettings {
  maxIterations: number;
  maxFunctionEvaluations: number;
  relativeReductionTolerance: number;
  relativeStepTolerance: number;
  gradientTolerance: number;
  initialStepFactor: number;
  /** √wᵢ·|yᵢ| per observation: the size of what each residual is a difference of (rounding noise). */
  valueScales: ArrayLike<number>;
  /** The Jacobian is analytic, so the polish may difference it for Newton steps (`gaussNewtonPolish`). */
  analyticJacobian: boolean;
}

/** Where a run stopped. */
export interface LevenbergMarquardtState {
  parameters: number[];
  /** Σ (weighted residual)² at `parameters`; Infinity if never finite. */
  residualSumOfSquares: number;
  iterations: number;
  functionEvaluations: number;
  converged: boolean;
  reason: string;
}

/** A trial step is accepted when the actual reduction is at least this fraction of the predicted one. */
const ACCEPTANCE_RATIO = 1e-4;
/** Below this agreement ratio the trust region shrinks. */
const SHRINK_RATIO = 0.25;
/** Above this agreement ratio the trust region doubles. */
const EXPAND_RATIO = 0.75;

/**
 * The trust-region loop of Moré's Levenberg–Marquardt method (MINPACK-1 `lmder`), on weighted
 * residual functions fᵢ(p) = √wᵢ·(model − yᵢ), with one change: a trial point where any residual
 * is not finite is treated as a failed step (the region shrinks), so overflow in an exponential
 * never propagates NaN.
 *
 * See `levenbergMarquardt` for the method, its reference and the meaning of the tolerances.
 * `residuals(p, out)` writes the m residuals; `jacobianColumns(p)` returns the n columns ∂f/∂pⱼ.
 *
 * Throws nothing.
 *
 * Example: see `levenberg-marquardt.test.ts`.
 */
export function runLevenbergMarquardt(
  initial: readonly number[],
  residuals: (parameters: readonly number[], out: Float64Array) => void,
  jacobianColumns: (parameters: readonly number[]) => Float64Array[],
  rows: number,
  settings: LevenbergMarquardtSettings,
): LevenbergMarquardtState {
  const n = initial.length;
  let parameters = [...initial];
  // Work arrays, allocated once per run: the residuals at the current point and at a trial point
  // (swapped when a step is accepted), Qᵀf, R as n dense columns, and n-vectors.
  let residualVector = new Float64Array(rows);
  let trialResiduals = new Float64Array(rows);
  const qtf = new Float64Array(rows);
  const r = Array.from({ length: n }, () => new Float64Array(n));
  const solution = new Float64Array(n);
  const step = new Float64Array(n);
  const scaledVector = new Float64Array(n);
  const predictedChange = new Float64Array(n);
  const scaling = new Float64Array(n);
  const scaledNorm = (vector: ArrayLike<number>): number => {
    for (let j = 0; j < n; j++) scaledVector[j] = scaling[j]! * vector[j]!;
    return euclideanNorm(scaledVector);
  };
  residuals(parameters, residualVector);
  let functionEvaluations = 1;
  let residualNorm = finiteNorm(residualVector);
  const stop = (converged: boolean, reason: string, iterations: number): LevenbergMarquardtState => {
    if (converged && residualNorm > 0) {
      const polished = gaussNewtonPolish(
        parameters,
        residualNorm,
        residuals,
        jacobianColumns,
        rows,
        settings.valueScales,
        settings.analyticJacobian,
      );
      parameters = polished.parameters;
      residualNorm = polished.residualNorm;
      functionEvaluations += polished.evaluations;
    }
    return {
      parameters,
      residualSumOfSquares: residualNorm * residualNorm,
      iterations,
      functionEvaluations,
      converged,
      reason,
    };
  };
  if (!Number.isFinite(residualNorm)) {
    return stop(false, 'the model is not finite at the initial parameters', 0);
  }
  let delta = 0;
  let scaledParameterNorm = 0;
  let damping = 0;
  for (let iteration = 1; iteration <= settings.maxIterations; iteration++) {
    const columns = jacobianColumns(parameters);
    if (!allFinite(columns)) {
      return stop(false, 'the Jacobian is not finite at the current parameters', iteration);
    }
    const qr = householderQr(columns, rows, true);
    if (iteration === 1) {
      for (let j = 0; j < n; j++) {
        scaling[j] = qr.columnNorms[j] === 0 ? 1 : qr.columnNorms[j]!;
      }
      scaledParameterNorm = scaledNorm(parameters);
      delta = settings.initialStepFactor * scaledParameterNorm || settings.initialStepFactor;
    }
    // Qᵀf and the triangular factor R as n dense columns.
    qtf.set(residualVector);
    for (let j = 0; j < n; j++) {
      const column = qr.columns[j]!;
      if (column[j] !== 0 && qr.diagonal[j] !== 0) {
        let sum = 0;
        for (let i = j; i < rows; i++) {
          sum += column[i]! * qtf[i]!;
        }
        const factor = -sum / column[j]!;
        for (let i = j; i < rows; i++) {
          qtf[i] = qtf[i]! + factor * column[i]!;
        }
      }
    }
    for (let j = 0; j < n; j++) {
      const dense = r[j]!;
      dense.fill(0);
      for (let i = 0; i < j; i++) {
        dense[i] = qr.columns[j]![i]!;
      }
      dense[j] = qr.diagonal[j]!;
    }
    const qtb = qtf.subarray(0, n);
    // Largest cosine between the residual vector and a Jacobian column.
    let gradientCosine = 0;
    if (residualNorm !== 0) {
      for (let j = 0; j < n; j++) {
        const columnNorm = qr.columnNorms[qr.permutation[j]!]!;
        if (columnNorm !== 0) {
          let sum = 0;
          for (let i = 0; i <= j; i++) {
            sum += r[j]![i]! * (qtb[i]! / residualNorm);
          }
          gradientCosine = Math.max(gradientCosine, Math.abs(sum / columnNorm));
        }
      }
    }
    if (gradientCosine <= settings.gradientTolerance) {
      return stop(true, 'the gradient is orthogonal to the residuals (gradient tolerance met)', iteration);
    }
    for (let j = 0; j < n; j++) {
      scaling[j] = Math.max(scaling[j]!, qr.columnNorms[j]!);
    }
    // Inner loop: trial steps until one is accepted.
    for (;;) {
      damping = levenbergMarquardtParameter(r, qr.permutation, scaling, qtb, delta, damping, solution);
      for (let j = 0; j < n; j++) step[j] = -solution[j]!;
      const trial = parameters.map((value, j) => value + step[j]!);
      const stepNorm = scaledNorm(step);
      if (iteration === 1) {
        delta = Math.min(delta, stepNorm);
      }
      residuals(trial, trialResiduals);
      functionEvaluations++;
      const trialNorm = finiteNorm(trialResiduals);
      const actualReduction = 0.1 * trialNorm < residualNorm ? 1 - (trialNorm / residualNorm) ** 2 : -1;
      // Predicted reduction of the linear model.
      predictedChange.fill(0);
      for (let j = 0; j < n; j++) {
        const value = step[qr.permutation[j]!]!;
        for (let i = 0; i <= j; i++) {
          predictedChange[i] = predictedChange[i]! + r[j]![i]! * value;
        }
      }
      const linearTerm = euclideanNorm(predictedChange) / residualNorm;
      const dampingTerm = (Math.sqrt(damping) * stepNorm) / residualNorm;
      const predictedReduction = linearTerm ** 2 + dampingTerm ** 2 / 0.5;
      const directionalDerivative = -(linearTerm ** 2 + dampingTerm ** 2);
      const ratio = predictedReduction === 0 ? 0 : actualReduction / predictedReduction;
      if (ratio <= SHRINK_RATIO) {
        let factor =
          actualReduction >= 0
            ? 0.5
            : (0.5 * directionalDerivative) / (directionalDerivative + 0.5 * actualReduction);
        if (0.1 * trialNorm >= residualNorm || factor < 0.1 || !Number.isFinite(factor)) {
          factor = 0.1;
        }
        delta = factor * Math.min(delta, stepNorm / 0.1);
        damping /= factor;
      } else if (damping === 0 || ratio >= EXPAND_RATIO) {
        delta = stepNorm / 0.5;
        damping *= 0.5;
      }
      const accepted = ratio >= ACCEPTANCE_RATIO;
      if (accepted) {
        parameters = trial;
        [residualVector, trialResiduals] = [trialResiduals, residualVector];
        residualNorm = trialNorm;
        scaledParameterNorm = scaledNorm(parameters);
      }
      const reductionSmall =
        Math.abs(actualReduction) <= settings.relativeReductionTolerance &&
        predictedReduction <= settings.relativeReductionTolerance &&
        0.5 * ratio <= 1;
      const stepSmall = delta <= settings.relativeStepTolerance * scaledParameterNorm;
      if (reductionSmall || stepSmall) {
        const what =
          reductionSmall && stepSmall
            ? 'relative reduction and step'
            : reductionSmall
              ? 'relative reduction'
              : 'relative step';
        return stop(true, `${what} of the sum of squares below tolerance`, iteration);
      }
      if (residualNorm === 0) {
        return stop(true, 'the model fits the data exactly', iteration);
      }
      if (functionEvaluations >= settings.maxFunctionEvaluations) {
        return stop(
          false,
          `no convergence within ${settings.maxFunctionEvaluations} function evaluations`,
          iteration,
        );
      }
      if (
        Math.abs(actualReduction) <= Number.EPSILON &&
        predictedReduction <= Number.EPSILON &&
        0.5 * ratio <= 1
      ) {
        return stop(
          true,
          'no further reduction of the sum of squares is possible in double precision',
          iteration,
        );
      }
      if (delta <= Number.EPSILON * scaledParameterNorm) {
        return stop(
          true,
          'no further improvement of the parameters is possible in double precision',
          iteration,
        );
      }
      if (gradientCosine <= Number.EPSILON) {
        return stop(true, 'the gradient vanishes to double precision', iteration);
      }
      if (accepted) {
        break;
      }
    }
  }
  return stop(false, `no convergence within ${settings.maxIterations} iterations`, settings.maxIterations);
}

/** True when every entry of every column is finite. */
function allFinite(columns: readonly Float64Array[]): boolean {
  for (const column of columns) {
    for (let i = 0; i < column.length; i++) {
      if (!Number.isFinite(column[i]!)) return false;
    }
  }
  return true;
}

/** Euclidean norm, or Infinity when any entry is not finite. */
function finiteNorm(vector: Float64Array): number {
  for (const value of vector) {
    if (!Number.isFinite(value)) {
      return Number.POSITIVE_INFINITY;
    }
  }
  const norm = euclideanNorm(vector);
  return Number.isFinite(norm) ? norm : Number.POSITIVE_INFINITY;
}
