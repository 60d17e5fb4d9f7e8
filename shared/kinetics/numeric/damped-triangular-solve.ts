/**
 * Solves the damped least-squares problem  min ‖[R; D·Pᵀ]·z − [qtb; 0]‖  given the upper-triangular
 * R of a pivoted QR factorization J·P = Q·R, a diagonal D and qtb = (Qᵀ·f)[first n]: the inner
 * solve of every Levenberg–Marquardt trial step (MINPACK `qrsolv`).
 *
 * Why: the damped step (JᵀJ + DᵀD)·step = −Jᵀf is solved without forming JᵀJ, by eliminating
 * the diagonal rows with Givens rotations against R, which keeps the conditioning of J itself.
 *
 * Formula in words: for each column j (in pivoted order) append the row with D[permutation[j]]
 * in column j, rotate it into R row by row, carrying the rotations through the right-hand side;
 * the result is a new triangular matrix S with SᵀS = RᵀR + PᵀDᵀDP; back-substitute, setting to zero
 * the components past the first zero diagonal (a least-squares solution when singular).
 *
 * Reference: J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and theory",
 * Lecture Notes in Mathematics 630 (1978) 105–116; MINPACK-1 `qrsolv`
 * (https://www.netlib.org/minpack/).
 *
 * `r` holds n columns of length n: its upper triangle (with diagonal) is R and is preserved; its
 * strict lower triangle receives the strict upper triangle of S transposed, and `sDiagonal` its
 * diagonal. The solution is written to `solution` in the original (unpivoted) order.
 *
 * Throws nothing.
 *
 * Example: R = [[2]], D = [0], qtb = [4] gives solution [2].
 */
export function dampedTriangularSolve(
  r: Float64Array[],
  permutation: Int32Array,
  diagonal: Float64Array,
  qtb: Float64Array,
  solution: Float64Array,
  sDiagonal: Float64Array,
): void {
  const n = r.length;
  const work = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    for (let i = j; i < n; i++) {
      r[j]![i] = r[i]![j]!;
    }
    solution[j] = r[j]![j]!;
    work[j] = qtb[j]!;
  }
  for (let j = 0; j < n; j++) {
    const damping = diagonal[permutation[j]!]!;
    if (damping !== 0) {
      sDiagonal.fill(0, j);
      sDiagonal[j] = damping;
      let qtbpj = 0;
      for (let k = j; k < n; k++) {
        if (sDiagonal[k] === 0) {
          continue;
        }
        const columnK = r[k]!;
        let cosine: number;
        let sine: number;
        if (Math.abs(columnK[k]!) < Math.abs(sDiagonal[k]!)) {
          const cotangent = columnK[k]! / sDiagonal[k]!;
          sine = 0.5 / Math.sqrt(0.25 + 0.25 * cotangent * cotangent);
          cosine = sine * cotangent;
        } else {
          const tangent = sDiagonal[k]! / columnK[k]!;
          cosine = 0.5 / Math.sqrt(0.25 + 0.25 * tangent * tangent);
          sine = cosine * tangent;
        }
        columnK[k] = cosine * columnK[k]! + sine * sDiagonal[k]!;
        const rotated = cosine * work[k]! + sine * qtbpj;
        qtbpj = -sine * work[k]! + cosine * qtbpj;
        work[k] = rotated;
        for (let i = k + 1; i < n; i++) {
          const value = cosine * columnK[i]! + sine * sDiagonal[i]!;
          sDiagonal[i] = -sine * columnK[i]! + cosine * sDiagonal[i]!;
          columnK[i] = value;
        }
      }
    }
    sDiagonal[j] = r[j]![j]!;
    r[j]![j] = solution[j]!;
  }
  let nonSingular = n;
  for (let j = 0; j < n; j++) {
    if (sDiagonal[j] === 0 && nonSingular === n) {
      nonSingular = j;
    }
    if (nonSingular < n) {
      work[j] = 0;
    }
  }
  for (let j = nonSingular - 1; j >= 0; j--) {
    let sum = 0;
    for (let i = j + 1; i < nonSingular; i++) {
      sum += r[j]![i]! * work[i]!;
    }
    work[j] = (work[j]! - sum) / sDiagonal[j]!;
  }
  for (let j = 0; j < n; j++) {
    solution[permutation[j]!] = work[j]!;
  }
}
