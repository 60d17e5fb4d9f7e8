import { accurateDotProduct } from './accurate-dot-product.ts';
import { assertFiniteNumbers, assertValidWeights } from './assert-finite-numbers.ts';
import { compensatedSum } from './compensated-sum.ts';
import { euclideanNorm } from './euclidean-norm.ts';
import { householderQr } from './householder-qr.ts';
import { KineticsError } from './kinetics-error.ts';
import { refinedLeastSquaresSolution } from './least-squares-refinement.ts';
import { qrInverseCrossProduct } from './qr-inverse-cross-product.ts';

/** Result of a linear least-squares fit; every number is finite. */
export interface LinearFit {
  /** Estimated coefficients, one per design column. */
  coefficients: number[];
  /** √(diagonal of `covariance`). */
  standardErrors: number[];
  /** s²·(XᵀWX)⁻¹, the estimated covariance of the coefficients. */
  covariance: number[][];
  /** yᵢ − fittedᵢ (not multiplied by the weights). */
  residuals: number[];
  fitted: number[];
  /** Σ wᵢ·residualᵢ² (weights 1 when none given). */
  residualSumOfSquares: number;
  /** n − p. */
  degreesOfFreedom: number;
  /** s = √(residualSumOfSquares / degreesOfFreedom). */
  residualStandardDeviation: number;
  /** Centred R² when the model has an intercept, uncentred R² otherwise (see `hasIntercept`). */
  rSquared: number;
  /** Numerical rank of the design; always equal to the number of columns in a returned fit. */
  rank: number;
  /** Whether R² was computed in centred form (a constant column is present, or the caller said so). */
  hasIntercept: boolean;
  /** Number of refinement passes applied after the first QR solution. */
  refinementSteps: number;
}

export interface LinearLeastSquaresOptions {
  /** Positive weights wᵢ (e.g. 1/σᵢ²); the fit minimises Σ wᵢ·(yᵢ − fittedᵢ)². */
  weights?: readonly number[];
  /** Overrides detection of a constant design column for the form of R². */
  hasIntercept?: boolean;
}

/**
 * A column whose scaled QR diagonal is below this fraction of the largest is treated as a linear
 * combination of the others. 1e-13 ≈ 450·machine epsilon: NIST Filip, the hardest certified
 * design, reaches 1.2e-9 after column scaling (measured) and must stay full rank.
 */
const RANK_TOLERANCE = 1e-13;

/**
 * Linear least squares: the coefficients b minimising Σ wᵢ·(yᵢ − Σⱼ Xᵢⱼ·bⱼ)², with their
 * standard errors, covariance and goodness of fit. `design` has one row per observation and one
 * column per coefficient (include a column of ones for an intercept).
 *
 * Why QR and not the normal equations: see `householderQr`. The columns are first scaled to unit
 * length (so that a column of x¹⁰ does not dwarf the column of ones), factorized with column
 * pivoting, and the solution is then improved by iterative refinement with residuals computed
 * in doubled precision (`accurateDotProduct`), which recovers several digits on ill-conditioned
 * designs.
 *
 * Formulas in words: with X·P = Q·R, b = P·R⁻¹·(Qᵀy)[first p]; residual variance
 * s² = RSS/(n − p); covariance s²·(XᵀWX)⁻¹; R² = 1 − RSS/Σwᵢ(yᵢ − ȳ_w)² with an intercept, and
 * 1 − RSS/Σwᵢyᵢ² without one (the uncentred form NIST certifies for NoInt1/NoInt2). When the
 * total sum of squares is 0 (a constant response fitted exactly) R² is reported as 1.
 *
 * Reference: Å. Björck, "Numerical Methods for Least Squares Problems", SIAM 1996, §2.4 and
 * §2.9 (refinement); NIST StRD linear regression background,
 * https://www.itl.nist.gov/div898/strd/lls/lls.shtml.
 *
 * Throws `KineticsError`: 'invalid-input' (ragged or empty design, length mismatch, non-finite
 * values, bad weights), 'too-few-points' (n ≤ p, leaving no degrees of freedom for the
 * standard errors), 'rank-deficient' (a column is a linear combination of others).
 *
 * Example: design [[1,0],[1,1],[1,2]] with y [1,3,5] gives coefficients [1, 2], residual SD 0
 * — but n = 3, p = 2 leaves one degree of freedom, so the fit is accepted.
 */
export function linearLeastSquares(
  design: readonly (readonly number[])[],
  response: readonly number[],
  options: LinearLeastSquaresOptions = {},
): LinearFit {
  const observations = response.length;
  const parameterCount = validateDesign(design, response);
  if (observations <= parameterCount) {
    throw new KineticsError(
      'too-few-points',
      `A model with ${parameterCount} coefficients needs more than ${parameterCount} points; got ${observations}.`,
      { n: observations, p: parameterCount },
    );
  }
  const weights = options.weights;
  if (weights !== undefined) {
    assertValidWeights(weights, observations);
  }
  const rootWeight = (i: number): number => (weights === undefined ? 1 : Math.sqrt(weights[i]!));

  const scales = new Float64Array(parameterCount);
  const columns: Float64Array[] = [];
  for (let j = 0; j < parameterCount; j++) {
    const column = new Float64Array(observations);
    for (let i = 0; i < observations; i++) {
      column[i] = rootWeight(i) * design[i]![j]!;
    }
    const scale = euclideanNorm(column);
    if (scale === 0) {
      throw new KineticsError('rank-deficient', `Design column ${j} is all zeros.`, { column: j });
    }
    for (let i = 0; i < observations; i++) {
      column[i] = column[i]! / scale;
    }
    scales[j] = scale;
    columns.push(column);
  }
  const qr = householderQr(columns, observations, true);
  const largestDiagonal = Math.abs(qr.diagonal[0]!);
  for (let j = 0; j < parameterCount; j++) {
    if (!(Math.abs(qr.diagonal[j]!) > RANK_TOLERANCE * largestDiagonal)) {
      throw new KineticsError(
        'rank-deficient',
        `Design column ${qr.permutation[j]} is (nearly) a linear combination of the others; the coefficients are not determined.`,
        { rank: j, columns: parameterCount, dependentColumn: qr.permutation[j] },
      );
    }
  }

  const weightedRows = design.map((row, i) => row.map((value) => rootWeight(i) * value));
  const weightedResponse = response.map((y, i) => rootWeight(i) * y);
  const { coefficients, refinementSteps } = refinedLeastSquaresSolution(
    qr,
    weightedRows,
    weightedResponse,
    scales,
  );

  const residuals: number[] = [];
  const fitted: number[] = [];
  const weightedSquares: number[] = [];
  for (let i = 0; i < observations; i++) {
    const residual = -accurateDotProduct(design[i]!, coefficients, -response[i]!);
    residuals.push(residual);
    fitted.push(response[i]! - residual);
    weightedSquares.push((weights === undefined ? 1 : weights[i]!) * residual * residual);
  }
  const residualSumOfSquares = compensatedSum(weightedSquares);
  const degreesOfFreedom = observations - parameterCount;
  const residualVariance = residualSumOfSquares / degreesOfFreedom;
  const unscaledCovariance = qrInverseCrossProduct(qr);
  const covariance = unscaledCovariance.map((row, i) =>
    row.map((value, j) => (residualVariance * value) / (scales[i]! * scales[j]!)),
  );
  const hasIntercept = options.hasIntercept ?? hasConstantColumn(design, parameterCount);
  return {
    coefficients: Array.from(coefficients),
    standardErrors: covariance.map((row, j) => Math.sqrt(Math.max(0, row[j]!))),
    covariance,
    residuals,
    fitted,
    residualSumOfSquares,
    degreesOfFreedom,
    residualStandardDeviation: Math.sqrt(residualVariance),
    rSquared: coefficientOfDetermination(response, weights, residualSumOfSquares, hasIntercept),
    rank: parameterCount,
    hasIntercept,
    refinementSteps,
  };
}

/** Checks shape and finiteness; returns the number of columns. */
function validateDesign(design: readonly (readonly number[])[], response: readonly number[]): number {
  if (design.length !== response.length) {
    throw new KineticsError(
      'invalid-input',
      `The design has ${design.length} rows for ${response.length} responses.`,
      {
        rows: design.length,
        responses: response.length,
      },
    );
  }
  const parameterCount = design[0]?.length ?? 0;
  if (parameterCount === 0) {
    throw new KineticsError('invalid-input', 'The design has no columns (or no rows).', {});
  }
  design.forEach((row, i) => {
    if (row.length !== parameterCount) {
      throw new KineticsError(
        'invalid-input',
        `Design row ${i} has ${row.length} entries, expected ${parameterCount}.`,
        {
          row: i,
        },
      );
    }
    assertFiniteNumbers(row, `design[${i}]`);
  });
  assertFiniteNumbers(response, 'response');
  return parameterCount;
}

/** True when some column is the same non-zero number in every row. */
function hasConstantColumn(design: readonly (readonly number[])[], parameterCount: number): boolean {
  for (let j = 0; j < parameterCount; j++) {
    const first = design[0]![j]!;
    if (first !== 0 && design.every((row) => row[j] === first)) {
      return true;
    }
  }
  return false;
}

/** R², centred or uncentred, with weights; 1 when the total sum of squares is 0. */
function coefficientOfDetermination(
  response: readonly number[],
  weights: readonly number[] | undefined,
  residualSumOfSquares: number,
  centred: boolean,
): number {
  const weightOf = (i: number): number => (weights === undefined ? 1 : weights[i]!);
  let centre = 0;
  if (centred) {
    const totalWeight = compensatedSum(response.map((_, i) => weightOf(i)));
    centre = compensatedSum(response.map((y, i) => weightOf(i) * y)) / totalWeight;
  }
  const totalSumOfSquares = compensatedSum(response.map((y, i) => weightOf(i) * (y - centre) ** 2));
  return totalSumOfSquares === 0 ? 1 : 1 - residualSumOfSquares / totalSumOfSquares;
}
