import { compensatedSum } from '../numeric/compensated-sum.ts';
import { KineticsError } from '../numeric/kinetics-error.ts';
import { celsiusToKelvin, KELVIN_AT_ZERO_CELSIUS } from '../units.ts';
import {
  USP_MEAN_KINETIC_TEMPERATURE_ACTIVATION_ENERGY,
  USP_MEAN_KINETIC_TEMPERATURE_GAS_CONSTANT,
} from './physical-constants.ts';

export interface MeanKineticTemperatureOptions {
  /** Heat of activation ΔH in J/mol; default 83 144 (USP <1160>). */
  activationEnergy?: number;
  /** Gas constant in J/(mol·K); default 8.3144 (USP <1160>), so that ΔH/R = 10 000 K. */
  gasConstant?: number;
  /** Length of each period the temperatures average over (any unit); default equal periods. */
  durations?: readonly number[];
}

/** Result of `meanKineticTemperature`; every number is finite. */
export interface MeanKineticTemperature {
  meanKineticTemperatureC: number;
  meanKineticTemperatureK: number;
  /** Plain (time-weighted) arithmetic mean, for comparison: MKT is never below it. */
  arithmeticMeanC: number;
  activationEnergy: number;
  gasConstant: number;
  n: number;
}

/**
 * Mean kinetic temperature (MKT): the single constant temperature that would cause the same
 * total Arrhenius degradation as the recorded temperature history.
 *
 * Why: USP <1160> uses it to judge a storage area or a shipment whose temperature varied; it
 * weights warm periods more than the arithmetic mean does, because degradation speeds up
 * exponentially with temperature.
 *
 * Formula in words: with c = ΔH/R and Tᵢ the average temperature (K) of period i with time
 * share pᵢ = tᵢ/Σt (1/n for equal periods), MKT = c / (−ln Σ pᵢ·exp(−c/Tᵢ)). The sum is formed
 * as a log-sum-exp — the largest exponent is taken out before exponentiating — so that large
 * ΔH or low temperatures never underflow every term to zero. By default ΔH = 83.144 kJ/mol and
 * R = 8.3144 J/(mol·K), the constants printed in USP <1160>, so ΔH/R = 10 000 K exactly and the
 * result reproduces the pharmacopoeial calculation (the exact 2019 R would give 9 999.92 K).
 * USP asks for at least 12 equally spaced averages over one year; that is the caller's protocol
 * decision and is not enforced here.
 *
 * Reference: USP 29 general chapter <1160> (uspbpep.com/usp29/v29240/usp29nf24s0_c1160.html);
 * J. D. Haynes, J. Pharm. Sci. 60 (1971) 927; docs/methods.md#mean-kinetic-temperature.
 *
 * Throws `KineticsError`: 'too-few-points' for no temperatures, 'invalid-input' for a temperature
 * at or below absolute zero, non-finite numbers, a non-positive ΔH or R, durations of the wrong
 * length, negative durations or all durations zero.
 *
 * Example: equal time at 20 °C and 30 °C gives MKT = 26.260 °C (arithmetic mean 25 °C).
 */
export function meanKineticTemperature(
  temperaturesC: readonly number[],
  options: MeanKineticTemperatureOptions = {},
): MeanKineticTemperature {
  const activationEnergy = options.activationEnergy ?? USP_MEAN_KINETIC_TEMPERATURE_ACTIVATION_ENERGY;
  const gasConstant = options.gasConstant ?? USP_MEAN_KINETIC_TEMPERATURE_GAS_CONSTANT;
  const n = temperaturesC.length;
  if (n === 0) {
    throw new KineticsError(
      'too-few-points',
      'The mean kinetic temperature needs at least one temperature.',
      { n },
    );
  }
  if (
    !(
      Number.isFinite(activationEnergy) &&
      activationEnergy > 0 &&
      Number.isFinite(gasConstant) &&
      gasConstant > 0
    )
  ) {
    throw new KineticsError('invalid-input', 'ΔH and R must be finite and positive.', {
      activationEnergy,
      gasConstant,
    });
  }
  const durations = options.durations ?? temperaturesC.map(() => 1);
  if (durations.length !== n || durations.some((t) => !Number.isFinite(t) || t < 0)) {
    throw new KineticsError(
      'invalid-input',
      'Durations must be finite, non-negative and one per temperature.',
      {
        temperatures: n,
        durations: durations.length,
      },
    );
  }
  const totalDuration = compensatedSum(durations);
  if (!(totalDuration > 0)) {
    throw new KineticsError('invalid-input', 'At least one duration must be positive.');
  }
  const kelvin = temperaturesC.map((temperatureC, index) => {
    const value = celsiusToKelvin(temperatureC);
    if (!(value > 0)) {
      throw new KineticsError('invalid-input', 'Temperature must be above absolute zero.', { index });
    }
    return value;
  });
  const ratio = activationEnergy / gasConstant;
  const exponents = kelvin.map((temperature) => -ratio / temperature);
  // A loop, not Math.max(...): spreading 10⁵ arguments (a long logger file) overflows the stack.
  let largest = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < n; i += 1) {
    if ((durations[i] ?? 0) > 0 && (exponents[i] as number) > largest) largest = exponents[i] as number;
  }
  const scaledSum = compensatedSum(
    exponents.map((e, i) => ((durations[i] ?? 0) / totalDuration) * Math.exp(e - largest)),
  );
  const logMean = largest + Math.log(scaledSum);
  const meanKineticTemperatureK = -ratio / logMean;
  return {
    meanKineticTemperatureC: meanKineticTemperatureK - KELVIN_AT_ZERO_CELSIUS,
    meanKineticTemperatureK,
    arithmeticMeanC: compensatedSum(temperaturesC.map((t, i) => t * (durations[i] ?? 0))) / totalDuration,
    activationEnergy,
    gasConstant,
    n,
  };
}
