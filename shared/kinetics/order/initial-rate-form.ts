/**
 * The free-order law's two parametrisations: (C0, k, n), reported, with −dC/dt = k·Cⁿ; and the
 * initial-rate form (C0, r0, n), r0 = k·C0ⁿ the initial rate, in which it is fitted (see
 * `initialRateLawAt` and `rate-law-problem.ts` for why).
 *
 * Formula in words: k = r0·C0^(−n), r0 = k·C0ⁿ. A covariance Σ of (C0, r0, n) becomes T·Σ·Tᵀ for
 * (C0, k, n), T the Jacobian of the map: ∂k/∂C0 = −n·k/C0, ∂k/∂r0 = C0^(−n), ∂k/∂n = −k·ln C0. For the
 * least-squares covariance s²·(JᵀJ)⁻¹ this is exact, not an approximation: the Jacobian of the model in
 * (C0, k, n) is J·T⁻¹, so its (JᵀJ)⁻¹ is T·(JᵀJ)⁻¹·Tᵀ.
 *
 * Reference: change of parameters in the asymptotic covariance, D. M. Bates & D. G. Watts, Nonlinear
 * Regression Analysis and Its Applications (1988) §3.2 (from memory).
 *
 * Throws nothing. Example: `rateConstantOf(100, 2, 1)` is 0.02, `initialRateOf(100, 0.02, 1)` is 2.
 */

export function rateConstantOf(initialValue: number, initialRate: number, n: number): number {
  return initialRate * Math.exp(-n * Math.log(initialValue));
}

export function initialRateOf(initialValue: number, rateConstant: number, n: number): number {
  return rateConstant * Math.exp(n * Math.log(initialValue));
}

/** The covariance of (C0, k, n) from that of (C0, r0, n) (3×3, nested rows) at (C0, r0, n). */
export function rateConstantFormCovariance(
  initialValue: number,
  initialRate: number,
  n: number,
  covariance: readonly (readonly number[])[],
): number[][] {
  const rateConstant = rateConstantOf(initialValue, initialRate, n);
  const logInitial = Math.log(initialValue);
  const map = [
    [1, 0, 0],
    [(-n * rateConstant) / initialValue, Math.exp(-n * logInitial), -rateConstant * logInitial],
    [0, 0, 1],
  ];
  const product = map.map((row) =>
    [0, 1, 2].map((j) => row.reduce((sum, entry, k) => sum + entry * covariance[k]![j]!, 0)),
  );
  return product.map((row) =>
    [0, 1, 2].map((j) => row.reduce((sum, entry, k) => sum + entry * map[j]![k]!, 0)),
  );
}
