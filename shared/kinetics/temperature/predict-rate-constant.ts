import { KineticsError } from '../numeric/kinetics-error.ts';
import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import { celsiusToKelvin } from '../units.ts';
import type { ArrheniusFit } from './arrhenius-fit.ts';
import { lineValueAt } from './inverse-temperature-line.ts';

/** Temperatures this close (in °C) to the edge of the fitted range count as inside it. */
const RANGE_EDGE_TOLERANCE_C = 1e-9;

/** Result of `predictRateConstant`; JSON-serialisable. */
export interface RateConstantPrediction {
  temperatureC: number;
  /** Point estimate exp(ln k̂): the median of k under log-normal scatter, not its mean. */
  rateConstant: number;
  lnRateConstant: number;
  lnRateConstantStandardError: number | null;
  confidence: number;
  /** Interval for the mean line at this temperature, back-transformed from the ln scale. */
  confidenceInterval: [number, number] | null;
  /** Interval for one new determination of k at this temperature (unweighted fits only). */
  predictionInterval: [number, number] | null;
  /** Why an interval is null, otherwise null. */
  intervalUnavailableReason: string | null;
  /** 'below' or 'above' the fitted temperature range, or null inside it. */
  extrapolation: 'below-fitted-range' | 'above-fitted-range' | null;
}

/**
 * Rate constant at another temperature from an Arrhenius fit, e.g. k at the 25 °C storage
 * condition from 40–60 °C accelerated data, with its confidence interval and an extrapolation flag.
 *
 * Formula in words: x₀ = 1/(θ + 273.15); ln k̂₀ = a + b·(x₀ − x_ref) on the centred line; the
 * standard error of the mean line there is √(Var a + (x₀ − x_ref)²·Var b + 2(x₀ − x_ref)·Cov(a, b)),
 * and the interval is ln k̂₀ ± t·se with t at (1 + confidence)/2 and n − 2 degrees of freedom,
 * exponentiated (so it is asymmetric in k). The prediction interval for a new determination
 * adds the residual variance s² under the root (unweighted fits only: under weighting a new
 * point's weight is unknown). Outside the fitted temperatures the answer is an extrapolation and
 * is flagged: the straight line is then an assumption the data cannot check (Kohout, Molecules 26 (2021)
 * 7162, on curved Arrhenius plots; docs/methods.md#rate-constant-at-the-storage-temperature).
 *
 * Reference: NIST/SEMATECH e-Handbook §4.5.2.4 (prediction from a fitted line).
 *
 * Throws `KineticsError('invalid-input')` for a temperature at or below absolute zero or a
 * confidence outside (0, 1), and `KineticsError('not-applicable')` when exp(ln k̂) overflows.
 *
 * Example: the 2 HI fit of `arrheniusFit` predicts k(293 °C) = 6.35e-7 M⁻¹ s⁻¹ with 95 %
 * confidence interval [4.47, 9.02]e-7 and prediction interval [3.59, 11.2]e-7; 293 °C lies inside
 * 283–508 °C, so `extrapolation` is null.
 */
export function predictRateConstant(
  fit: ArrheniusFit,
  temperatureC: number,
  confidence: number = fit.confidence,
): RateConstantPrediction {
  if (!(confidence > 0 && confidence < 1)) {
    throw new KineticsError(
      'invalid-input',
      `Confidence must lie strictly between 0 and 1; got ${confidence}.`,
    );
  }
  const temperatureK = celsiusToKelvin(temperatureC);
  if (!(temperatureK > 0)) {
    throw new KineticsError('invalid-input', 'Temperature must be above absolute zero.', { temperatureC });
  }
  const { estimate, standardError } = lineValueAt(fit.line, 1 / temperatureK);
  if (!Number.isFinite(Math.exp(estimate))) {
    throw new KineticsError('not-applicable', `The predicted k at ${temperatureC} °C overflows a double.`, {
      lnRateConstant: estimate,
    });
  }
  const [lowC, highC] = fit.temperatureRangeC;
  const extrapolation =
    temperatureC < lowC - RANGE_EDGE_TOLERANCE_C
      ? 'below-fitted-range'
      : temperatureC > highC + RANGE_EDGE_TOLERANCE_C
        ? 'above-fitted-range'
        : null;
  const base = {
    temperatureC,
    rateConstant: Math.exp(estimate),
    lnRateConstant: estimate,
    lnRateConstantStandardError: standardError,
    confidence,
    extrapolation,
  } as const;
  const residualStandardDeviation = fit.line.residualStandardDeviation;
  if (standardError === null || residualStandardDeviation === null) {
    return {
      ...base,
      confidenceInterval: null,
      predictionInterval: null,
      intervalUnavailableReason: fit.intervalUnavailableReason ?? 'No residual degrees of freedom.',
    };
  }
  const quantile = studentTQuantile((1 + confidence) / 2, fit.degreesOfFreedom);
  const backTransformed = (halfWidth: number): [number, number] | null => {
    const interval: [number, number] = [Math.exp(estimate - halfWidth), Math.exp(estimate + halfWidth)];
    return interval.every(Number.isFinite) ? interval : null;
  };
  const confidenceInterval = backTransformed(quantile * standardError);
  const predictionInterval = fit.line.weighted
    ? null
    : backTransformed(quantile * Math.sqrt(standardError ** 2 + residualStandardDeviation ** 2));
  const reasons = [
    confidenceInterval === null || (predictionInterval === null && !fit.line.weighted)
      ? 'An interval bound overflows a double.'
      : null,
    fit.line.weighted
      ? 'No prediction interval for a weighted fit: the weight of a new determination is unknown.'
      : null,
  ].filter((reason): reason is string => reason !== null);
  return {
    ...base,
    confidenceInterval,
    predictionInterval,
    intervalUnavailableReason: reasons.length > 0 ? reasons.join(' ') : null,
  };
}
