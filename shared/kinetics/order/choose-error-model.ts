import type { ErrorModel } from '../types.ts';
import type { RateLawFit } from './fit-rate-law.ts';

/**
 * Chooses between constant and proportional measurement error from the data, by comparing the
 * likelihood of the same rate law fitted under each.
 *
 * Why: with constant error (an HPLC assay with a fixed SD) the unweighted fit is right; with a constant
 * coefficient of variation (e.g. a concentration spanning decades) late, small values are measured more
 * precisely and should count more. The choice changes the estimates and, at high conversion, which order
 * fits best, so it is made from the data and stated.
 *
 * Rule (stated in the method statement): fit the best integer-order law under constant error and the
 * same law under proportional error (log scale). Both log-likelihoods are on the original scale of the
 * values (the log-scale fit carries the Jacobian −Σ ln yᵢ) and both models have the same number of
 * parameters, so their difference is a likelihood ratio. Proportional is chosen only when it is higher by at
 * least `PROPORTIONAL_LOG_LIKELIHOOD_GAIN` (a likelihood ratio of e² ≈ 7.4); otherwise the conventional
 * unweighted fit is kept. When the values span little, the two models are nearly the same and the
 * unweighted fit is kept.
 *
 * Reference: constant-CV error → log scale or weights 1/ŷ² (standard weighting theory, from memory; see
 * docs/methods.md#error-model); comparing error models by likelihood on a common scale, Burnham &
 * Anderson (2002) §6.7 (from memory).
 *
 * Throws nothing.
 *
 * Example: a constant-error fit with log-likelihood −20 and a proportional one with −17 choose
 * 'proportional' (gain 3 ≥ 2); −20 against −19 keep 'constant'.
 */

export const PROPORTIONAL_LOG_LIKELIHOOD_GAIN = 2;

export interface ErrorModelChoice {
  errorModel: ErrorModel;
  source: 'data' | 'caller';
  /** Log-likelihoods on the original scale of the compared fits (null when not compared). */
  logLikelihoodConstant: number | null;
  logLikelihoodProportional: number | null;
  reason: string;
}

export function chooseErrorModel(
  constantFit: RateLawFit,
  proportionalFit: RateLawFit | null,
): ErrorModelChoice {
  if (proportionalFit === null) {
    return {
      errorModel: 'constant',
      source: 'data',
      logLikelihoodConstant: constantFit.logLikelihood,
      logLikelihoodProportional: null,
      reason: 'the proportional (log-scale) fit is not available, so the unweighted fit is used',
    };
  }
  const gain = proportionalFit.logLikelihood - constantFit.logLikelihood;
  const proportional = gain >= PROPORTIONAL_LOG_LIKELIHOOD_GAIN;
  return {
    errorModel: proportional ? 'proportional' : 'constant',
    source: 'data',
    logLikelihoodConstant: constantFit.logLikelihood,
    logLikelihoodProportional: proportionalFit.logLikelihood,
    reason: proportional
      ? `a constant relative error fits better by ${gain.toFixed(1)} log-likelihood units (at least ${PROPORTIONAL_LOG_LIKELIHOOD_GAIN} needed)`
      : `a constant relative error does not fit better by at least ${PROPORTIONAL_LOG_LIKELIHOOD_GAIN} log-likelihood units (difference ${gain.toFixed(1)}), so the unweighted fit is used`,
  };
}
