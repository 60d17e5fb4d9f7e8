import { euclideanNorm } from './euclidean-norm.ts';
import { householderQr } from './householder-qr.ts';
import { qrInverseCrossProduct } from './qr-inverse-cross-product.ts';

/**
 * Below this fraction of the largest diagonal entry of the column-scaled, pivoted R, the
 * Jacobian is treated as singular: some parameter combination is not determined by the data.
 * At 1e-10 (a scaled condition number of 1e10) the standard errors would already have lost
 * about 10 of their 16 digits. The smallest value met on the certified NIST StRD problems is
 * 4.9e-5 (Bennett5, measured), so every certified problem passes with a wide margin.
 */
const JACOBIAN_RANK_TOLERANCE = 1e-10;

/** Covariance of nonlinear least-squares parameters, or the reason it does not exist. */
export type NonlinearCovariance =
  | { ok: true; covariance: number[][]; standardErrors: number[]; smallestRelativeDiagonal: number }
  | { ok: false; reason: string; smallestRelativeDiagonal: number };

/**
 * Asymptotic covariance s²·(JᵀWJ)⁻¹ of nonlinear least-squares estimates from the (weighted)
 * Jacobian at the solution, with a rank check.
 *
 * Why: this is the covariance NIST certifies for its nonlinear problems and the one the standard
 * errors of a rate constant are based on. Working from a QR factorization of the column-scaled
 * Jacobian avoids squaring its condition number, and the rank check turns a singular Jacobian
 * (two parameters that trade off exactly) into a stated reason rather than huge or NaN errors.
 *
 * Formula in words: scale each column of J to unit length, factorize with pivoting, require every
 * diagonal entry of R to exceed the tolerance times the largest, then
 * covariance = residual variance × S⁻¹·(RᵀR)⁻¹·S⁻¹ with S the column lengths.
 *
 * Reference: D. M. Bates, D. G. Watts, "Nonlinear Regression Analysis and Its Applications",
 * Wiley 1988, §2.3; NIST StRD nonlinear regression background,
 * https://www.itl.nist.gov/div898/strd/nls/nls_info.shtml.
 *
 * `jacobianColumns` are the columns √wᵢ·∂fᵢ/∂pⱼ (overwritten). Throws nothing.
 *
 * Example: one parameter with Jacobian column [1, 1, 1, 1] and residual variance 2 gives
 * covariance [[0.5]].
 */
export function nonlinearCovariance(
  jacobianColumns: Float64Array[],
  residualVariance: number,
): NonlinearCovariance {
  const rows = jacobianColumns[0]?.length ?? 0;
  const scales = jacobianColumns.map((column) => euclideanNorm(column));
  if (scales.some((scale) => !Number.isFinite(scale))) {
    return { ok: false, reason: 'the Jacobian at the solution is not finite', smallestRelativeDiagonal: 0 };
  }
  const zeroColumn = scales.indexOf(0);
  if (zeroColumn >= 0) {
    return {
      ok: false,
      reason: `singular Jacobian: the model does not depend on parameter ${zeroColumn + 1} at the solution`,
      smallestRelativeDiagonal: 0,
    };
  }
  jacobianColumns.forEach((column, j) => {
    for (let i = 0; i < rows; i++) {
      column[i] = column[i]! / scales[j]!;
    }
  });
  const qr = householderQr(jacobianColumns, rows, true);
  const largest = Math.abs(qr.diagonal[0]!);
  let smallestRelativeDiagonal = 1;
  for (let j = 0; j < qr.diagonal.length; j++) {
    smallestRelativeDiagonal = Math.min(smallestRelativeDiagonal, Math.abs(qr.diagonal[j]!) / largest);
  }
  if (!(smallestRelativeDiagonal > JACOBIAN_RANK_TOLERANCE)) {
    return {
      ok: false,
      reason: `singular Jacobian: the parameters are not separately determined (relative diagonal of R ${smallestRelativeDiagonal.toExponential(2)})`,
      smallestRelativeDiagonal,
    };
  }
  const unscaled = qrInverseCrossProduct(qr);
  const covariance = unscaled.map((row, i) =>
    row.map((value, j) => (residualVariance * value) / (scales[i]! * scales[j]!)),
  );
  const standardErrors = covariance.map((row, j) => Math.sqrt(Math.max(0, row[j]!)));
  if (covariance.some((row) => row.some((value) => !Number.isFinite(value)))) {
    return { ok: false, reason: 'the covariance matrix is not finite', smallestRelativeDiagonal };
  }
  return { ok: true, covariance, standardErrors, smallestRelativeDiagonal };
}
