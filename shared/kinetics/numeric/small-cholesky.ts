/**
 * Solves a small symmetric positive-definite system A·x = b (stored row-major in a Float64Array) by
 * Cholesky factorisation, and inverts such a matrix.
 *
 * Why: the rate-law fitter solves a 2×2 or 3×3 system of normal equations on every iteration, and the
 * Newton steps of `gauss-newton-polish.ts` one of the size of the parameter vector; a dedicated routine
 * does that without allocating a matrix object per step (its work arrays are kept between calls).
 *
 * Formula in words: factor A = L·Lᵀ with L lower triangular (Lⱼⱼ = √(Aⱼⱼ − Σₖ Lⱼₖ²),
 * Lᵢⱼ = (Aᵢⱼ − Σₖ Lᵢₖ·Lⱼₖ)/Lⱼⱼ), then solve L·y = b forwards and Lᵀ·x = y backwards.
 *
 * Reference: G. H. Golub & C. F. Van Loan, Matrix Computations, 4th ed., §4.2 (Cholesky);
 * https://en.wikipedia.org/wiki/Cholesky_decomposition.
 *
 * Throws nothing: returns `false` when A is not numerically positive definite (after scaling A to a
 * unit diagonal, a pivot at or below `PIVOT_TOLERANCE`), which the caller reports.
 *
 * Example: `solveSmallSymmetric(new Float64Array([4, 2, 2, 3]), new Float64Array([2, 1]), out, 2)`
 * writes [0.5, 0] into `out` and returns true.
 */

/** A pivot this small in the unit-diagonal (correlation) form means the matrix is singular to working precision. */
const PIVOT_TOLERANCE = 1e-14;

/** Work arrays shared by all calls (single-threaded; no call is re-entered), grown on demand. */
let scale = new Float64Array(3);
let lower = new Float64Array(9);

export function solveSmallSymmetric(
  matrix: Float64Array,
  rightHandSide: Float64Array,
  solution: Float64Array,
  dimension: number,
): boolean {
  if (scale.length < dimension) {
    scale = new Float64Array(dimension);
    lower = new Float64Array(dimension * dimension);
  }
  const stride = dimension;
  // Scaling to a unit diagonal first makes the pivot test measure correlation, not the units of the parameters.
  for (let i = 0; i < dimension; i++) {
    const diagonal = matrix[i * dimension + i]!;
    if (!(diagonal > 0) || !Number.isFinite(diagonal)) return false;
    scale[i] = 1 / Math.sqrt(diagonal);
  }
  if (!choleskyFactor(matrix, dimension)) return false;
  for (let i = 0; i < dimension; i++) {
    let sum = rightHandSide[i]! * scale[i]!;
    for (let k = 0; k < i; k++) sum -= lower[i * stride + k]! * solution[k]!;
    solution[i] = sum / lower[i * stride + i]!;
  }
  for (let i = dimension - 1; i >= 0; i--) {
    let sum = solution[i]!;
    for (let k = i + 1; k < dimension; k++) sum -= lower[k * stride + i]! * solution[k]!;
    solution[i] = sum / lower[i * stride + i]!;
  }
  for (let i = 0; i < dimension; i++) solution[i] = solution[i]! * scale[i]!;
  return true;
}

/** Inverse of a small symmetric positive-definite matrix (row-major), or null when it is singular. */
export function invertSmallSymmetric(matrix: Float64Array, dimension: number): Float64Array | null {
  const inverse = new Float64Array(dimension * dimension);
  const unit = new Float64Array(dimension);
  const column = new Float64Array(dimension);
  for (let j = 0; j < dimension; j++) {
    unit.fill(0);
    unit[j] = 1;
    if (!solveSmallSymmetric(matrix, unit, column, dimension)) return null;
    for (let i = 0; i < dimension; i++) inverse[i * dimension + j] = column[i]!;
  }
  return inverse;
}

/** L·Lᵀ of the unit-diagonal form of `matrix` into `lower` (row-major, stride `dimension`). */
function choleskyFactor(matrix: Float64Array, dimension: number): boolean {
  const stride = dimension;
  for (let j = 0; j < dimension; j++) {
    let pivot = matrix[j * dimension + j]! * scale[j]! * scale[j]!;
    for (let k = 0; k < j; k++) pivot -= lower[j * stride + k]! ** 2;
    if (!(pivot > PIVOT_TOLERANCE)) return false;
    const root = Math.sqrt(pivot);
    lower[j * stride + j] = root;
    for (let i = j + 1; i < dimension; i++) {
      let sum = matrix[i * dimension + j]! * scale[i]! * scale[j]!;
      for (let k = 0; k < j; k++) sum -= lower[i * stride + k]! * lower[j * stride + k]!;
      lower[i * stride + j] = sum / root;
    }
  }
  return true;
}
