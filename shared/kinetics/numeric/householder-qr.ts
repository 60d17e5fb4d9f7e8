import { euclideanNorm } from './euclidean-norm.ts';

/** A QR factorization A·P = Q·R held in the compact form MINPACK uses. */
export interface HouseholderQr {
  /** Number of rows m (observations). */
  readonly rows: number;
  /**
   * The n columns, each of length m, overwritten: above the diagonal the strict upper triangle
   * of R (column j holds R[0..j−1][j]); on and below the diagonal the Householder vector of step j.
   */
  readonly columns: Float64Array[];
  /** Diagonal of R. */
  readonly diagonal: Float64Array;
  /** Column j of R came from column `permutation[j]` of A. */
  readonly permutation: Int32Array;
  /** Euclidean norms of the original columns of A. */
  readonly columnNorms: Float64Array;
}

/**
 * A downdated column norm is recomputed from scratch once 0.05·(downdated / original)² falls to
 * machine epsilon, where the downdate formula has lost its accuracy (MINPACK `qrfac`).
 */
const NORM_RECOMPUTE_FACTOR = 0.05;

/**
 * Householder QR factorization A·P = Q·R of an m × n matrix (m ≥ n), optionally with column
 * pivoting, in place.
 *
 * Why: least squares solved through QR works with the condition number of A, whereas the normal
 * equations AᵀA·b = Aᵀy square it — on ill-conditioned designs such as NIST Filip (a 10th-degree
 * polynomial) that is the difference between 7 correct digits and none. Column pivoting moves
 * the column with the largest remaining norm forward at each step, so that a (near) linear
 * dependence shows up as a small trailing diagonal entry of R.
 *
 * Formula in words: at step j, choose a reflection I − v·vᵀ/v_j that maps the part of column j
 * on and below the diagonal onto a multiple (−sign·norm) of the unit vector, and apply it to
 * the remaining columns. The product of the reflections is Qᵀ.
 *
 * Reference: G. H. Golub, C. F. Van Loan, "Matrix Computations", 4th ed., §5.2 and §5.4.2;
 * MINPACK routine `qrfac` (Moré, Garbow, Hillstrom, ANL-80-74, https://www.netlib.org/minpack/).
 *
 * Throws nothing; callers check the dimensions. The `columns` passed in are overwritten.
 *
 * Example: factorizing the single column [3, 4] gives diagonal [−5].
 */
export function householderQr(columns: Float64Array[], rows: number, pivot: boolean): HouseholderQr {
  const count = columns.length;
  const diagonal = new Float64Array(count);
  const permutation = new Int32Array(count);
  const columnNorms = new Float64Array(count);
  const workingNorms = new Float64Array(count);
  for (let j = 0; j < count; j++) {
    const norm = euclideanNorm(columns[j]!, 0, rows);
    columnNorms[j] = norm;
    diagonal[j] = norm;
    workingNorms[j] = norm;
    permutation[j] = j;
  }
  const steps = Math.min(rows, count);
  for (let j = 0; j < steps; j++) {
    if (pivot) {
      let largest = j;
      for (let k = j + 1; k < count; k++) {
        if (diagonal[k]! > diagonal[largest]!) {
          largest = k;
        }
      }
      if (largest !== j) {
        [columns[j], columns[largest]] = [columns[largest]!, columns[j]!];
        diagonal[largest] = diagonal[j]!;
        workingNorms[largest] = workingNorms[j]!;
        const swap = permutation[j]!;
        permutation[j] = permutation[largest]!;
        permutation[largest] = swap;
      }
    }
    const column = columns[j]!;
    let norm = euclideanNorm(column, j, rows - j);
    if (norm === 0) {
      diagonal[j] = 0;
      continue;
    }
    if (column[j]! < 0) {
      norm = -norm;
    }
    for (let i = j; i < rows; i++) {
      column[i] = column[i]! / norm;
    }
    column[j] = column[j]! + 1;
    for (let k = j + 1; k < count; k++) {
      const other = columns[k]!;
      let sum = 0;
      for (let i = j; i < rows; i++) {
        sum += column[i]! * other[i]!;
      }
      const factor = sum / column[j]!;
      for (let i = j; i < rows; i++) {
        other[i] = other[i]! - factor * column[i]!;
      }
      if (pivot && diagonal[k] !== 0) {
        const ratio = other[j]! / diagonal[k]!;
        diagonal[k] = diagonal[k]! * Math.sqrt(Math.max(0, 1 - ratio * ratio));
        const relative = diagonal[k]! / workingNorms[k]!;
        if (NORM_RECOMPUTE_FACTOR * relative * relative <= Number.EPSILON) {
          diagonal[k] = euclideanNorm(other, j + 1, rows - j - 1);
          workingNorms[k] = diagonal[k]!;
        }
      }
    }
    diagonal[j] = -norm;
  }
  return { rows, columns, diagonal, permutation, columnNorms };
}

/**
 * Applies Qᵀ of a `householderQr` factorization to a vector of length m, in place.
 *
 * Example: after factorizing [3, 4], applying Qᵀ to [3, 4] gives [−5, 0].
 */
export function applyQTranspose(qr: HouseholderQr, vector: Float64Array): void {
  const steps = Math.min(qr.rows, qr.columns.length);
  for (let j = 0; j < steps; j++) {
    const column = qr.columns[j]!;
    if (column[j] === 0 || qr.diagonal[j] === 0) {
      continue;
    }
    let sum = 0;
    for (let i = j; i < qr.rows; i++) {
      sum += column[i]! * vector[i]!;
    }
    const factor = -sum / column[j]!;
    for (let i = j; i < qr.rows; i++) {
      vector[i] = vector[i]! + factor * column[i]!;
    }
  }
}

/**
 * Applies Q of a `householderQr` factorization to a vector of length m, in place (the
 * reflections of `applyQTranspose` in reverse order).
 *
 * Example: after factorizing [3, 4], applying Q to [−5, 0] gives [3, 4].
 */
export function applyQ(qr: HouseholderQr, vector: Float64Array): void {
  const steps = Math.min(qr.rows, qr.columns.length);
  for (let j = steps - 1; j >= 0; j--) {
    const column = qr.columns[j]!;
    if (column[j] === 0 || qr.diagonal[j] === 0) {
      continue;
    }
    let sum = 0;
    for (let i = j; i < qr.rows; i++) {
      sum += column[i]! * vector[i]!;
    }
    const factor = -sum / column[j]!;
    for (let i = j; i < qr.rows; i++) {
      vector[i] = vector[i]! + factor * column[i]!;
    }
  }
}
