/**
 * Small-sample Akaike information criterion (AICc) and Akaike weights, for comparing rate laws fitted
 * to the same values on the same (original) scale.
 *
 * Why: the zero-, first- and second-order laws all have two parameters and are not nested, so an F test
 * cannot compare them; AICc can, and Akaike weights turn AICc differences into the relative support of
 * each model (docs/methods.md#aicc-and-akaike-weights).
 *
 * Formula in words: AIC = −2·(log-likelihood) + 2K, with K the number of fitted parameters including the
 * error SD; AICc = AIC + 2K(K + 1)/(N − K − 1). For least squares −2·logL = N·ln(2π·RSS/N) + N, plus
 * 2·Σ ln yᵢ when the fit was on the log scale (the Jacobian that puts it on the original scale). Weights:
 * Δᵢ = AICcᵢ − min AICc, wᵢ = exp(−Δᵢ/2) / Σⱼ exp(−Δⱼ/2).
 *
 * Reference: K. P. Burnham & D. R. Anderson, Model Selection and Multimodel Inference, 2nd ed. (2002),
 * §2.4 (AICc) and §2.9 (Akaike weights) (from memory).
 *
 * Throws nothing: AICc is undefined when N − K − 1 ≤ 0 and is then returned as null; null entries get a
 * null weight and take no part in the normalisation.
 *
 * Example: `akaikeWeights([10, 12, null])` is [0.7311, 0.2689, null].
 */

export function aicc(logLikelihood: number, fittedParameters: number, pointCount: number): number | null {
  const k = fittedParameters + 1;
  const denominator = pointCount - k - 1;
  if (denominator <= 0 || !Number.isFinite(logLikelihood)) return null;
  return -2 * logLikelihood + 2 * k + (2 * k * (k + 1)) / denominator;
}

export function akaikeWeights(criteria: readonly (number | null)[]): (number | null)[] {
  let best = Number.POSITIVE_INFINITY;
  for (const value of criteria) if (value !== null && value < best) best = value;
  if (!Number.isFinite(best)) return criteria.map(() => null);
  const relative = criteria.map((value) => (value === null ? null : Math.exp(-(value - best) / 2)));
  let total = 0;
  for (const value of relative) if (value !== null) total += value;
  return relative.map((value) => (value === null ? null : value / total));
}
