import { KineticsError } from '../numeric/kinetics-error.ts';
import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import {
  fitInverseTemperatureLine,
  type InverseTemperatureLine,
  lineValueAt,
} from './inverse-temperature-line.ts';
import { BOLTZMANN_CONSTANT, MOLAR_GAS_CONSTANT, PLANCK_CONSTANT } from './physical-constants.ts';
import type { RateConstantMeasurement, TemperatureFitWeighting } from './rate-constant-measurement.ts';
import { temperatureFitInputs } from './temperature-fit-inputs.ts';

export interface EyringFitOptions {
  /**
   * Length of the time unit of k in seconds (3600 when k is per hour, 1 when per second).
   * ΔS‡ is only meaningful for k in s⁻¹ (times concentration units for orders other than 1),
   * so k is converted with this factor before the fit; ΔH‡ does not depend on it.
   */
  secondsPerTimeUnit: number;
  /** Default 'unweighted'. */
  weighting?: TemperatureFitWeighting;
  /** Two-sided confidence level of the intervals; default 0.95. */
  confidence?: number;
}

/** An estimate with its standard error and two-sided interval (null when df = 0). */
export interface EstimateWithInterval {
  estimate: number;
  standardError: number | null;
  interval: [number, number] | null;
}

/** Result of `eyringFit`; JSON-serialisable, no NaN or Infinity. */
export interface EyringFit {
  model: 'eyring';
  /** κ = 1 is assumed (every crossing of the transition state leads to products). */
  transmissionCoefficient: 1;
  constants: { gasConstant: number; boltzmannConstant: number; planckConstant: number };
  weighting: TemperatureFitWeighting;
  confidence: number;
  secondsPerTimeUnit: number;
  n: number;
  degreesOfFreedom: number;
  /** Enthalpy of activation ΔH‡, J/mol. */
  enthalpyOfActivation: EstimateWithInterval;
  /** Entropy of activation ΔS‡, J/(mol·K). */
  entropyOfActivation: EstimateWithInterval;
  /** Gibbs energy of activation ΔG‡ = ΔH‡ − T·ΔS‡ at the centre of the data, J/mol. */
  gibbsEnergyOfActivationAtReference: EstimateWithInterval & { temperatureK: number };
  rSquared: number | null;
  intervalUnavailableReason: string | null;
  line: InverseTemperatureLine;
}

/**
 * Eyring (transition-state theory) fit: the enthalpy ΔH‡ and entropy ΔS‡ of activation from
 * rate constants at several temperatures, with confidence intervals.
 *
 * Why: an alternative to Arrhenius whose parameters have a thermodynamic reading; ΔS‡ hints at
 * the mechanism (a strongly negative value suggests an ordered, e.g. bimolecular, transition state).
 *
 * Formula in words: k = κ·(k_B·T/h)·exp(ΔS‡/R)·exp(−ΔH‡/(R·T)) with transmission coefficient
 * κ = 1, so ln(k/T) = ln(k_B/h) + ΔS‡/R − (ΔH‡/R)·(1/T). Regress ln(k/T) on centred 1/T:
 * ΔH‡ = −R·slope; ΔS‡ = R·(value at 1/T = 0 − ln(k_B/h)); ΔG‡ at the centre temperature
 * T_ref = 1/x_ref is −R·T_ref·(value at x_ref − ln(k_B/h)). k is first converted to s⁻¹ with
 * `secondsPerTimeUnit` (k_s = k / secondsPerTimeUnit). Constants exact (2019 SI):
 * k_B = 1.380 649e-23 J/K, h = 6.626 070 15e-34 J·s, R = N_A·k_B. For a unimolecular reaction
 * in solution Ea = ΔH‡ + R·T (textbook relation, e.g. Atkins' Physical Chemistry, "activated
 * complex theory"), so an Eyring fit's ΔH‡ sits about R·T below the Arrhenius Ea.
 *
 * Reference: IUPAC Gold Book, "transition state theory", doi 10.1351/goldbook.T06470; H. Eyring,
 * J. Chem. Phys. 3 (1935) 107 (from memory); docs/methods.md#eyring.
 *
 * Throws `KineticsError` as `arrheniusFit` does, plus 'invalid-input' when `secondsPerTimeUnit`
 * is not finite and positive.
 *
 * Example: k = 1e-3 s⁻¹ at exactly T = 298.15 K gives ln(k/T) = −12.60, so for a line through that
 * point ΔG‡(298.15 K) = −R·T·(−12.60 − 23.76) = 90.1 kJ/mol.
 */
export function eyringFit(
  measurements: readonly RateConstantMeasurement[],
  options: EyringFitOptions,
): EyringFit {
  const { secondsPerTimeUnit } = options;
  if (!(Number.isFinite(secondsPerTimeUnit) && secondsPerTimeUnit > 0)) {
    throw new KineticsError(
      'invalid-input',
      `secondsPerTimeUnit must be finite and positive; got ${secondsPerTimeUnit}.`,
    );
  }
  const weighting = options.weighting ?? 'unweighted';
  const confidence = options.confidence ?? 0.95;
  const inputs = temperatureFitInputs(measurements, weighting, confidence);
  const responses = inputs.lnRateConstants.map(
    (lnK, i) => lnK - Math.log(secondsPerTimeUnit) - Math.log(inputs.temperaturesK[i] ?? 1),
  );
  const line = fitInverseTemperatureLine(inputs.temperaturesK, responses, inputs.weights);
  const lnFrequency = Math.log(BOLTZMANN_CONSTANT / PLANCK_CONSTANT);
  const quantile =
    line.degreesOfFreedom > 0 ? studentTQuantile((1 + confidence) / 2, line.degreesOfFreedom) : null;
  const withInterval = (estimate: number, standardError: number | null): EstimateWithInterval => ({
    estimate,
    standardError,
    interval:
      standardError === null || quantile === null
        ? null
        : [estimate - quantile * standardError, estimate + quantile * standardError],
  });
  const R = MOLAR_GAS_CONSTANT;
  const atZero = lineValueAt(line, 0);
  const referenceTemperature = 1 / line.referenceInverseTemperature;
  const scaleAtReference = R * referenceTemperature;
  const referenceStandardError = line.valueAtReferenceStandardError;
  return {
    model: 'eyring',
    transmissionCoefficient: 1,
    constants: { gasConstant: R, boltzmannConstant: BOLTZMANN_CONSTANT, planckConstant: PLANCK_CONSTANT },
    weighting,
    confidence,
    secondsPerTimeUnit,
    n: line.n,
    degreesOfFreedom: line.degreesOfFreedom,
    enthalpyOfActivation: withInterval(
      -R * line.slope,
      line.slopeStandardError === null ? null : R * line.slopeStandardError,
    ),
    entropyOfActivation: withInterval(
      R * (atZero.estimate - lnFrequency),
      atZero.standardError === null ? null : R * atZero.standardError,
    ),
    gibbsEnergyOfActivationAtReference: {
      temperatureK: referenceTemperature,
      ...withInterval(
        -scaleAtReference * (line.valueAtReference - lnFrequency),
        referenceStandardError === null ? null : scaleAtReference * referenceStandardError,
      ),
    },
    rSquared: line.rSquared,
    intervalUnavailableReason: line.uncertaintyUnavailableReason,
    line,
  };
}
