import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import type { RateLawFit } from '../order/fit-rate-law.ts';
import { prepareRateLaw, rateLawAt } from '../order/integrated-rate-law.ts';

/**
 * The value a fitted rate law predicts at a time, with a confidence interval for the mean curve and a
 * prediction interval for one new measurement.
 *
 * Why: "what will the assay be at 24 months?" needs both: the confidence interval says how well the
 * curve is known, the prediction interval adds the scatter of a single future determination.
 *
 * Formula in words: ŷ = C(t; θ̂). With g the gradient of C with respect to the parameters at t and Σ their
 * covariance, Var ŷ ≈ gᵀΣg (delta method). Constant error: CI = ŷ ± q·√(gᵀΣg), PI = ŷ ± q·√(gᵀΣg + s²).
 * Proportional error (fitted on the log scale): the same on ln ŷ with g/ŷ and the log-scale s², and the
 * limits exponentiated, so they stay positive and asymmetric. q is the Student-t quantile on the fit's
 * residual degrees of freedom. A zero-order curve that has reached 0 predicts exactly 0 (no interval width).
 *
 * Reference: delta method for a function of the parameters (Bates & Watts 1988 §2.3, from memory);
 * mean-curve confidence interval versus prediction interval,
 * docs/methods.md#predicted-values-and-confidence-band;
 * NIST/SEMATECH e-Handbook §4.5.2.2 (https://www.itl.nist.gov/div898/handbook/pmd/section5/pmd522.htm).
 *
 * Throws `KineticsError('invalid-input')` for a confidence level outside (0, 1). A time at which the law is
 * undefined (a rising second-order curve past its singularity) gives `estimate: null`.
 *
 * Example: a first-order fit C0 = 100, k = 0.01 /month predicts 100·e^(−0.24) = 78.66 at 24 months.
 */

export interface PredictedValue {
  time: number;
  estimate: number | null;
  confidenceInterval: [number, number] | null;
  predictionInterval: [number, number] | null;
}

export function predictedValue(fit: RateLawFit, time: number, confidenceLevel: number): PredictedValue {
  const quantile = studentTQuantile(1 - (1 - confidenceLevel) / 2, fit.degreesOfFreedom);
  const law = prepareRateLaw(fit.model, fit.initialValue, fit.rateConstant, fit.n);
  const gradient = new Float64Array(3);
  const estimate = rateLawAt(law, time, gradient);
  if (!Number.isFinite(estimate)) {
    return { time, estimate: null, confidenceInterval: null, predictionInterval: null };
  }
  if (fit.covariance === null) {
    return { time, estimate, confidenceInterval: null, predictionInterval: null };
  }
  const p = fit.parameterCount;
  const logScale = fit.errorModel === 'proportional';
  if (logScale && !(estimate > 0)) {
    return { time, estimate, confidenceInterval: null, predictionInterval: null };
  }
  if (logScale) for (let a = 0; a < p; a++) gradient[a] = gradient[a]! / estimate;
  let variance = 0;
  for (let a = 0; a < p; a++) {
    for (let b = 0; b < p; b++) variance += gradient[a]! * fit.covariance[a * p + b]! * gradient[b]!;
  }
  variance = Math.max(0, variance);
  const confidenceHalfWidth = quantile * Math.sqrt(variance);
  const predictionHalfWidth = quantile * Math.sqrt(variance + fit.residualStandardDeviation ** 2);
  if (logScale) {
    return {
      time,
      estimate,
      confidenceInterval: [
        estimate * Math.exp(-confidenceHalfWidth),
        estimate * Math.exp(confidenceHalfWidth),
      ],
      predictionInterval: [
        estimate * Math.exp(-predictionHalfWidth),
        estimate * Math.exp(predictionHalfWidth),
      ],
    };
  }
  return {
    time,
    estimate,
    confidenceInterval: [estimate - confidenceHalfWidth, estimate + confidenceHalfWidth],
    predictionInterval: [estimate - predictionHalfWidth, estimate + predictionHalfWidth],
  };
}
