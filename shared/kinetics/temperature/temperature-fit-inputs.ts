import { KineticsError } from '../numeric/kinetics-error.ts';
import { celsiusToKelvin } from '../units.ts';
import type { RateConstantMeasurement, TemperatureFitWeighting } from './rate-constant-measurement.ts';

/**
 * Checks the measurements of an Arrhenius or Eyring fit and returns absolute temperatures, ln k
 * and (for inverse-variance weighting) the weights wᵢ = (kᵢ/se(kᵢ))² = 1/Var(ln kᵢ) (delta method).
 *
 * Throws `KineticsError('non-positive-value')` when a rate constant is ≤ 0: the logarithm the
 * temperature models need does not exist, so they are not applicable to such data (a negative
 * fitted k usually means the attribute did not change measurably at that temperature).
 * Throws `KineticsError('invalid-input')` for a temperature at or below absolute zero, a
 * non-finite number, a confidence level outside (0, 1), or a missing or non-positive standard
 * error under inverse-variance weighting.
 *
 * Example: `[{ temperatureC: 25, rateConstant: Math.E }]` gives temperaturesK [298.15],
 * lnRateConstants [1] and weights undefined.
 */
export function temperatureFitInputs(
  measurements: readonly RateConstantMeasurement[],
  weighting: TemperatureFitWeighting,
  confidence: number,
): { temperaturesK: number[]; lnRateConstants: number[]; weights: number[] | undefined } {
  if (!(confidence > 0 && confidence < 1)) {
    throw new KineticsError(
      'invalid-input',
      `Confidence must lie strictly between 0 and 1; got ${confidence}.`,
    );
  }
  const temperaturesK = measurements.map((measurement, index) => {
    const kelvin = celsiusToKelvin(measurement.temperatureC);
    if (!(kelvin > 0)) {
      throw new KineticsError('invalid-input', 'Temperature must be above absolute zero.', { index });
    }
    return kelvin;
  });
  const lnRateConstants = measurements.map((measurement, index) => {
    const k = measurement.rateConstant;
    if (!Number.isFinite(k)) {
      throw new KineticsError('invalid-input', `Rate constant ${index} is not a finite number.`, { index });
    }
    if (k <= 0) {
      throw new KineticsError(
        'non-positive-value',
        `Rate constant ${index} is ${k}; the temperature models need ln k, so they are not applicable to k ≤ 0.`,
        { index, rateConstant: k },
      );
    }
    return Math.log(k);
  });
  if (weighting === 'unweighted') {
    return { temperaturesK, lnRateConstants, weights: undefined };
  }
  const weights = measurements.map((measurement, index) => {
    const standardError = measurement.rateConstantStandardError;
    if (standardError === undefined || !Number.isFinite(standardError) || standardError <= 0) {
      throw new KineticsError(
        'invalid-input',
        `Inverse-variance weighting needs a positive standard error for every rate constant; point ${index} has none.`,
        { index },
      );
    }
    return (measurement.rateConstant / standardError) ** 2;
  });
  return { temperaturesK, lnRateConstants, weights };
}
