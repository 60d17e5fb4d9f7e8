import type { HouseholderQr } from './householder-qr.ts';

/**
 * The matrix (AᵀA)⁻¹ from a QR factorization A·P = Q·R, in the original column order of A.
 *
 * Why: the covariance of least-squares coefficients is s²·(AᵀA)⁻¹ (s² the residual variance).
 * Forming AᵀA and inverting it would square the condition number; with R in hand,
 * (AᵀA)⁻¹ = P·R⁻¹·R⁻ᵀ·Pᵀ needs only a triangular inverse.
 *
 * Formula in words: invert the upper-triangular R by back substitution, column by column;
 * multiply the inverse by its own transpose; undo the column permutation.
 *
 * Reference: Å. Björck, "Numerical Methods for Least Squares Problems", SIAM 1996, §2.8.3.
 *
 * Throws nothing; callers make sure no diagonal entry of R is zero (rank checked first).
 *
 * Example: for A with the single column [3, 4], (AᵀA)⁻¹ is [[0.04]].
 */
export function qrInverseCrossProduct(qr: HouseholderQr): number[][] {
  const size = qr.columns.length;
  // upperInverse[i][j] for i ≤ j holds (R⁻¹)[i][j].
  const upperInverse: Float64Array[] = Array.from({ length: size }, () => new Float64Array(size));
  for (let j = 0; j < size; j++) {
    upperInverse[j]![j] = 1 / qr.diagonal[j]!;
    for (let i = j - 1; i >= 0; i--) {
      let sum = 0;
      for (let k = i + 1; k <= j; k++) {
        sum += rEntry(qr, i, k) * upperInverse[k]![j]!;
      }
      upperInverse[i]![j] = -sum / qr.diagonal[i]!;
    }
  }
  const result: number[][] = Array.from({ length: size }, () => new Array<number>(size).fill(0));
  for (let i = 0; i < size; i++) {
    for (let j = i; j < size; j++) {
      let sum = 0;
      for (let k = j; k < size; k++) {
        sum += upperInverse[i]![k]! * upperInverse[j]![k]!;
      }
      const row = qr.permutation[i]!;
      const column = qr.permutation[j]!;
      result[row]![column] = sum;
      result[column]![row] = sum;
    }
  }
  return result;
}

/** R[i][k] for i < k from the compact storage, or the diagonal for i = k. */
function rEntry(qr: HouseholderQr, i: number, k: number): number {
  return i === k ? qr.diagonal[i]! : qr.columns[k]![i]!;
}
