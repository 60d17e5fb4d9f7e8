/**
 * Euclidean length √(Σ xᵢ²) of a vector (or of `length` entries starting at `start`), computed
 * without overflow or underflow.
 *
 * Why: QR factorization and trust-region steps measure vectors whose entries may be as large as
 * 1e200 or as small as 1e-200; squaring them directly would overflow to Infinity or vanish to 0.
 *
 * Formula in words: divide every entry by the largest magnitude, sum the squares of the
 * quotients, take the square root and multiply back by the largest magnitude.
 *
 * Reference: J. J. Moré, B. S. Garbow, K. E. Hillstrom, "User Guide for MINPACK-1",
 * Argonne ANL-80-74 (1980), routine `enorm` (https://www.netlib.org/minpack/).
 *
 * Throws nothing; an empty range has length 0.
 *
 * Example: `euclideanNorm([3e200, 4e200])` is 5e200 (to the last digit; squaring directly gives Infinity).
 */
export function euclideanNorm(values: ArrayLike<number>, start = 0, length = values.length - start): number {
  let largest = 0;
  for (let index = start; index < start + length; index++) {
    const magnitude = Math.abs(values[index]!);
    if (magnitude > largest) {
      largest = magnitude;
    }
  }
  if (largest === 0 || !Number.isFinite(largest)) {
    return largest;
  }
  let sumOfSquares = 0;
  for (let index = start; index < start + length; index++) {
    const ratio = values[index]! / largest;
    sumOfSquares += ratio * ratio;
  }
  return largest * Math.sqrt(sumOfSquares);
}
