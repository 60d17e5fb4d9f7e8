import { dampedTriangularSolve } from './damped-triangular-solve.ts';
import { euclideanNorm } from './euclidean-norm.ts';

/** Accept a damping parameter once the scaled step length is within this fraction of the bound. */
const STEP_LENGTH_TOLERANCE = 0.1;
/** At most this many damping-parameter updates per trial step (Moré's choice). */
const MAX_PARAMETER_ITERATIONS = 10;

/**
 * The Levenberg–Marquardt damping parameter λ ≥ 0 and step for a trust region of radius Δ:
 * either λ = 0 and the Gauss–Newton step already satisfies ‖D·step‖ ≤ 1.1·Δ, or λ > 0 and
 * ‖D·step‖ is within 10 % of Δ, where step solves (JᵀJ + λ·DᵀD)·step = −Jᵀf (MINPACK `lmpar`).
 *
 * Why: choosing the step length (the trust region) and deriving λ from it, rather than
 * adjusting λ by fixed factors, is what makes Moré's formulation robust on badly scaled problems.
 *
 * Formula in words: φ(λ) = ‖D·step(λ)‖ − Δ is decreasing and convex-like in λ; starting from
 * bounds derived from R (a lower bound from the Gauss–Newton step, an upper bound from the
 * scaled gradient), apply safeguarded Newton steps on φ, each needing one damped solve
 * (`dampedTriangularSolve`).
 *
 * Reference: J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and theory",
 * Lecture Notes in Mathematics 630 (1978) 105–116, §5; MINPACK-1 `lmpar`.
 *
 * Arguments as in `dampedTriangularSolve`; `solution` receives the minimizer of
 * ‖[R; √λ·D·Pᵀ]·z − [qtb; 0]‖ (the step is its negative). Returns the new λ.
 *
 * Throws nothing.
 *
 * Example: R = [[1]], D = [1], qtb = [10], Δ = 1 gives λ ≈ 9 and solution ≈ [1].
 */
export function levenbergMarquardtParameter(
  r: Float64Array[],
  permutation: Int32Array,
  diagonal: Float64Array,
  qtb: Float64Array,
  delta: number,
  initialParameter: number,
  solution: Float64Array,
): number {
  const n = r.length;
  const smallest = Number.MIN_VALUE;
  const work1 = new Float64Array(n);
  const work2 = new Float64Array(n);
  const sDiagonal = new Float64Array(n);
  // Gauss–Newton direction (a least-squares solution if R is singular).
  let nonSingular = n;
  for (let j = 0; j < n; j++) {
    work1[j] = qtb[j]!;
    if (r[j]![j] === 0 && nonSingular === n) {
      nonSingular = j;
    }
    if (nonSingular < n) {
      work1[j] = 0;
    }
  }
  for (let j = nonSingular - 1; j >= 0; j--) {
    work1[j] = work1[j]! / r[j]![j]!;
    const value = work1[j]!;
    for (let i = 0; i < j; i++) {
      work1[i] = work1[i]! - r[j]![i]! * value;
    }
  }
  for (let j = 0; j < n; j++) {
    solution[permutation[j]!] = work1[j]!;
  }
  for (let j = 0; j < n; j++) {
    work2[j] = diagonal[j]! * solution[j]!;
  }
  let scaledLength = euclideanNorm(work2);
  let excess = scaledLength - delta;
  if (excess <= STEP_LENGTH_TOLERANCE * delta) {
    return 0;
  }
  // Lower bound from the Newton step at λ = 0 (only when R is non-singular).
  let lower = 0;
  if (nonSingular === n) {
    for (let j = 0; j < n; j++) {
      const l = permutation[j]!;
      work1[j] = diagonal[l]! * (work2[l]! / scaledLength);
    }
    for (let j = 0; j < n; j++) {
      let sum = 0;
      for (let i = 0; i < j; i++) {
        sum += r[j]![i]! * work1[i]!;
      }
      work1[j] = (work1[j]! - sum) / r[j]![j]!;
    }
    const length = euclideanNorm(work1);
    lower = excess / delta / length / length;
  }
  // Upper bound from the scaled gradient.
  for (let j = 0; j < n; j++) {
    let sum = 0;
    for (let i = 0; i <= j; i++) {
      sum += r[j]![i]! * qtb[i]!;
    }
    work1[j] = sum / diagonal[permutation[j]!]!;
  }
  const gradientLength = euclideanNorm(work1);
  let upper = gradientLength / delta;
  if (upper === 0) {
    upper = smallest / Math.min(delta, STEP_LENGTH_TOLERANCE);
  }
  let parameter = Math.min(Math.max(initialParameter, lower), upper);
  if (parameter === 0) {
    parameter = gradientLength / scaledLength;
  }
  for (let iteration = 1; ; iteration++) {
    if (parameter === 0) {
      parameter = Math.max(smallest, 0.001 * upper);
    }
    const root = Math.sqrt(parameter);
    for (let j = 0; j < n; j++) {
      work1[j] = root * diagonal[j]!;
    }
    dampedTriangularSolve(r, permutation, work1, qtb, solution, sDiagonal);
    for (let j = 0; j < n; j++) {
      work2[j] = diagonal[j]! * solution[j]!;
    }
    scaledLength = euclideanNorm(work2);
    const previousExcess = excess;
    excess = scaledLength - delta;
    if (
      Math.abs(excess) <= STEP_LENGTH_TOLERANCE * delta ||
      (lower === 0 && excess <= previousExcess && previousExcess < 0) ||
      iteration === MAX_PARAMETER_ITERATIONS
    ) {
      return parameter;
    }
    // Newton correction of λ.
    for (let j = 0; j < n; j++) {
      const l = permutation[j]!;
      work1[j] = diagonal[l]! * (work2[l]! / scaledLength);
    }
    for (let j = 0; j < n; j++) {
      work1[j] = work1[j]! / sDiagonal[j]!;
      const value = work1[j]!;
      for (let i = j + 1; i < n; i++) {
        work1[i] = work1[i]! - r[j]![i]! * value;
      }
    }
    const length = euclideanNorm(work1);
    const correction = excess / delta / length / length;
    if (excess > 0) {
      lower = Math.max(lower, parameter);
    } else if (excess < 0) {
      upper = Math.min(upper, parameter);
    }
    parameter = Math.max(lower, parameter + correction);
  }
}
