import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import { KELVIN_AT_ZERO_CELSIUS } from '../units.ts';
import {
  fitInverseTemperatureLine,
  type InverseTemperatureLine,
  lineValueAt,
} from './inverse-temperature-line.ts';
import { MOLAR_GAS_CONSTANT } from './physical-constants.ts';
import type { RateConstantMeasurement, TemperatureFitWeighting } from './rate-constant-measurement.ts';
import { temperatureFitInputs } from './temperature-fit-inputs.ts';

export interface ArrheniusFitOptions {
  /** Default 'unweighted'. */
  weighting?: TemperatureFitWeighting;
  /** Two-sided confidence level of the intervals; default 0.95. */
  confidence?: number;
}

/** Result of `arrheniusFit`; JSON-serialisable, no NaN or Infinity. */
export interface ArrheniusFit {
  model: 'arrhenius';
  /** R used for Ea = −R·slope, J/(mol·K) (exact 2019 SI value). */
  gasConstant: number;
  weighting: TemperatureFitWeighting;
  confidence: number;
  n: number;
  degreesOfFreedom: number;
  /** Activation energy Ea in J/mol. */
  activationEnergy: number;
  activationEnergyStandardError: number | null;
  activationEnergyInterval: [number, number] | null;
  /** ln A, in ln of the unit of k. */
  lnPreExponentialFactor: number;
  lnPreExponentialFactorStandardError: number | null;
  lnPreExponentialFactorInterval: [number, number] | null;
  /** A = exp(ln A); null if it overflows a double. */
  preExponentialFactor: number | null;
  /** Slope of ln k against 1/T, in kelvin (−Ea/R). */
  slope: number;
  rSquared: number | null;
  residualStandardDeviation: number | null;
  /** Why the intervals are null (exactly two points), otherwise null. */
  intervalUnavailableReason: string | null;
  /** Lowest and highest fitted temperature, °C (for the extrapolation flag). */
  temperatureRangeC: [number, number];
  /** The fitted line in centred form, used by `predictRateConstant`. */
  line: InverseTemperatureLine;
}

/**
 * Arrhenius fit: the activation energy Ea and pre-exponential factor A of k = A·exp(−Ea/(R·T))
 * from rate constants measured at several temperatures, with confidence intervals.
 *
 * Why: accelerated stability studies measure k at raised temperatures (e.g. 40–60 °C) so that k
 * at the storage temperature can be estimated before long-term data exist; Ea also says how
 * sensitive a product is to temperature excursions.
 *
 * Formula in words: regress ln k on 1/T (T in kelvin = °C + 273.15), with 1/T centred at its
 * mean (`fitInverseTemperatureLine`). The slope b equals −Ea/R, so Ea = −R·b and
 * se(Ea) = R·se(b); ln A is the line's value at 1/T = 0. Intervals are estimate ± t·se with the
 * two-sided Student t quantile at (1 + confidence)/2 and n − 2 degrees of freedom.
 * R = 8.314 462 618 153 24 J/(mol·K), exact since the 2019 SI. Unweighted by default; with
 * `weighting: 'inverse-variance'` each ln kᵢ gets the relative weight (kᵢ/se(kᵢ))², i.e.
 * 1/Var(ln kᵢ) by the delta method. With exactly two points Ea is exact for those points and
 * every interval is null with `intervalUnavailableReason` (0 degrees of freedom).
 *
 * Reference: IUPAC Gold Book, "Arrhenius equation", doi 10.1351/goldbook.A00446;
 * docs/methods.md#arrhenius-fit.
 *
 * Throws `KineticsError`: 'too-few-points' (fewer than 2 rate constants), 'zero-variance' (all
 * temperatures equal), 'non-positive-value' (a k ≤ 0: ln k does not exist, the model is not
 * applicable), 'invalid-input' (temperature at or below absolute zero, non-finite numbers,
 * confidence outside (0, 1), missing standard errors for weighting).
 *
 * Example (2 HI → H2 + I2, McMurry & Fay Worked Example 12.13): k = 3.52e-7, 3.02e-5, 2.19e-4,
 * 1.16e-3, 3.95e-2 M⁻¹ s⁻¹ at 283, 356, 393, 427, 508 °C give Ea = 186.3 kJ/mol with 95 %
 * interval [176.6, 196.0] kJ/mol and R² = 0.9992.
 */
export function arrheniusFit(
  measurements: readonly RateConstantMeasurement[],
  options: ArrheniusFitOptions = {},
): ArrheniusFit {
  const weighting = options.weighting ?? 'unweighted';
  const confidence = options.confidence ?? 0.95;
  const { temperaturesK, lnRateConstants, weights } = temperatureFitInputs(
    measurements,
    weighting,
    confidence,
  );
  const line = fitInverseTemperatureLine(temperaturesK, lnRateConstants, weights);
  const lnA = lineValueAt(line, 0);
  const activationEnergy = -MOLAR_GAS_CONSTANT * line.slope;
  const activationEnergyStandardError =
    line.slopeStandardError === null ? null : MOLAR_GAS_CONSTANT * line.slopeStandardError;
  const quantile =
    line.degreesOfFreedom > 0 ? studentTQuantile((1 + confidence) / 2, line.degreesOfFreedom) : null;
  const interval = (estimate: number, standardError: number | null): [number, number] | null =>
    standardError === null || quantile === null
      ? null
      : [estimate - quantile * standardError, estimate + quantile * standardError];
  const preExponentialFactor = Math.exp(lnA.estimate);
  const [minimumInverse, maximumInverse] = line.inverseTemperatureRange;
  return {
    model: 'arrhenius',
    gasConstant: MOLAR_GAS_CONSTANT,
    weighting,
    confidence,
    n: line.n,
    degreesOfFreedom: line.degreesOfFreedom,
    activationEnergy,
    activationEnergyStandardError,
    activationEnergyInterval: interval(activationEnergy, activationEnergyStandardError),
    lnPreExponentialFactor: lnA.estimate,
    lnPreExponentialFactorStandardError: lnA.standardError,
    lnPreExponentialFactorInterval: interval(lnA.estimate, lnA.standardError),
    preExponentialFactor: Number.isFinite(preExponentialFactor) ? preExponentialFactor : null,
    slope: line.slope,
    rSquared: line.rSquared,
    residualStandardDeviation: line.residualStandardDeviation,
    intervalUnavailableReason: line.uncertaintyUnavailableReason,
    temperatureRangeC: [
      1 / maximumInverse - KELVIN_AT_ZERO_CELSIUS,
      1 / minimumInverse - KELVIN_AT_ZERO_CELSIUS,
    ],
    line,
  };
}
