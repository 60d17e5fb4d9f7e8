/** Dekker's splitting constant 2^27 + 1 for IEEE double precision. */
const SPLIT_FACTOR = 134217729;

/**
 * Dot product Σ aᵢ·bᵢ (plus an optional constant term) computed as if in twice the working
 * precision, then rounded: the "Dot2" algorithm.
 *
 * Why: iterative refinement of a least-squares solution needs residuals y − X·b that are
 * more accurate than the solution itself; an ordinary dot product loses exactly the digits that
 * refinement is meant to recover (NIST Filip, where ‖X·b‖ ≈ ‖y‖ ≈ 10³·‖residual‖).
 *
 * Formula in words: every product aᵢ·bᵢ is split exactly into its rounded value plus its rounding
 * error (Dekker's TwoProduct), every addition likewise (Knuth's TwoSum); the rounded parts are
 * summed and all the error parts are summed separately and added back at the end.
 *
 * Reference: T. Ogita, S. M. Rump, S. Oishi, "Accurate sum and dot product", SIAM J. Sci.
 * Comput. 26 (2005) 1955–1988, Algorithm 5.3; free preprint at
 * https://www.tuhh.de/ti3/paper/rump/OgRuOi05.pdf.
 *
 * Throws nothing; lengths are the caller's responsibility (the shorter length is used).
 *
 * Example: `accurateDotProduct([1e16, 1, -1e16], [1, 1, 1])` is `1` (a plain loop gives `0`).
 */
export function accurateDotProduct(a: ArrayLike<number>, b: ArrayLike<number>, constant = 0): number {
  let sum = constant;
  let error = 0;
  const length = Math.min(a.length, b.length);
  for (let index = 0; index < length; index++) {
    const x = a[index]!;
    const y = b[index]!;
    const product = x * y;
    // TwoProduct via Dekker splitting.
    const xSplit = SPLIT_FACTOR * x;
    const xHigh = xSplit - (xSplit - x);
    const xLow = x - xHigh;
    const ySplit = SPLIT_FACTOR * y;
    const yHigh = ySplit - (ySplit - y);
    const yLow = y - yHigh;
    const productError = xLow * yLow - (product - xHigh * yHigh - xLow * yHigh - xHigh * yLow);
    // TwoSum.
    const next = sum + product;
    const back = next - sum;
    const sumError = sum - (next - back) + (product - back);
    sum = next;
    error += productError + sumError;
  }
  return sum + error;
}
