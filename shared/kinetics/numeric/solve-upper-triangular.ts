import type { HouseholderQr } from './householder-qr.ts';

/**
 * Solves R·z = (first n entries of `rightHandSide`) by back substitution, with R the
 * upper-triangular factor of a `householderQr` factorization (in its pivoted column order).
 *
 * Formula in words: the last unknown is its right-hand side divided by the last diagonal entry;
 * each earlier unknown subtracts the contributions of the later ones and divides by its diagonal.
 *
 * Reference: G. H. Golub, C. F. Van Loan, "Matrix Computations", 4th ed., Algorithm 3.1.2.
 *
 * Throws nothing; callers ensure the diagonal has no zero (rank checked first).
 *
 * Example: R = [[2, 1], [0, 4]] and right-hand side [4, 8] give z = [1, 2].
 */
export function solveUpperTriangular(qr: HouseholderQr, rightHandSide: ArrayLike<number>): Float64Array {
  const size = qr.columns.length;
  const solution = new Float64Array(size);
  for (let i = size - 1; i >= 0; i--) {
    let sum = rightHandSide[i]!;
    for (let k = i + 1; k < size; k++) {
      sum -= qr.columns[k]![i]! * solution[k]!;
    }
    solution[i] = sum / qr.diagonal[i]!;
  }
  return solution;
}

/**
 * Solves Rᵀ·z = `rightHandSide` by forward substitution, with R as in `solveUpperTriangular`.
 *
 * Example: R = [[2, 1], [0, 4]] and right-hand side [2, 9] give z = [1, 2].
 */
export function solveUpperTriangularTransposed(
  qr: HouseholderQr,
  rightHandSide: ArrayLike<number>,
): Float64Array {
  const size = qr.columns.length;
  const solution = new Float64Array(size);
  for (let i = 0; i < size; i++) {
    let sum = rightHandSide[i]!;
    const column = qr.columns[i]!;
    for (let k = 0; k < i; k++) {
      sum -= column[k]! * solution[k]!;
    }
    solution[i] = sum / qr.diagonal[i]!;
  }
  return solution;
}
