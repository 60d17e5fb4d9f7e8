import { KineticsError } from '../numeric/kinetics-error.ts';
import { celsiusToKelvin } from '../units.ts';
import { MOLAR_GAS_CONSTANT } from './physical-constants.ts';

/**
 * The Q10 temperature coefficient: the factor by which a rate rises for a 10 °C rise.
 * A rough screen only (docs/methods.md#q10) — the defensible number is the Arrhenius fit with its
 * intervals; Q10 drifts with temperature for a fixed Ea, so always quote the interval it spans.
 *
 * Reference: van 't Hoff (1884); handwiki.org "Chemistry:Q10 (temperature coefficient)";
 * the link to Ea, ln Q10 = (Ea/R)(1/T₁ − 1/T₂), follows from the Arrhenius equation (docs/methods.md#q10).
 * R is the exact 2019 SI value.
 */

function checkedKelvin(temperatureC: number, name: string): number {
  const kelvin = celsiusToKelvin(temperatureC);
  if (!(kelvin > 0)) {
    throw new KineticsError('invalid-input', `${name} must be above absolute zero.`, { temperatureC });
  }
  return kelvin;
}

function checkedInterval(lowerC: number, upperC: number): [number, number] {
  const lower = checkedKelvin(lowerC, 'The lower temperature');
  const upper = checkedKelvin(upperC, 'The upper temperature');
  if (lower === upper) {
    throw new KineticsError('zero-variance', 'Q10 needs two different temperatures.', {
      temperatureC: lowerC,
    });
  }
  return [lower, upper];
}

/**
 * Q10 from two rate constants: (k₂/k₁)^(10/(θ₂ − θ₁)), θ in °C.
 *
 * Throws `KineticsError('non-positive-value')` for k ≤ 0 (the ratio's power is then undefined or
 * meaningless), 'zero-variance' for equal temperatures, 'invalid-input' below absolute zero or
 * for non-finite numbers.
 *
 * Example: k = 1 at 20 °C and 2 at 30 °C give Q10 = 2; k = 1 at 25 °C and 4 at 45 °C also give 2.
 */
export function q10FromRateConstants(
  rateConstant1: number,
  temperature1C: number,
  rateConstant2: number,
  temperature2C: number,
): number {
  checkedInterval(temperature1C, temperature2C);
  for (const k of [rateConstant1, rateConstant2]) {
    if (!Number.isFinite(k)) {
      throw new KineticsError('invalid-input', 'Rate constants must be finite numbers.', { rateConstant: k });
    }
    if (k <= 0) {
      throw new KineticsError('non-positive-value', `Q10 needs positive rate constants; got ${k}.`, {
        rateConstant: k,
      });
    }
  }
  const exponent = 10 / (temperature2C - temperature1C);
  return Math.exp(exponent * (Math.log(rateConstant2) - Math.log(rateConstant1)));
}

/**
 * Q10 implied by an activation energy over an interval: ln Q10 = (Ea/R)·(1/T₁ − 1/T₂)·10/(θ₂ − θ₁),
 * which for θ₂ = θ₁ + 10 (the default) is the Arrhenius rate ratio k(T₂)/k(T₁).
 *
 * Throws `KineticsError('invalid-input')` for a non-finite Ea or temperatures below absolute
 * zero, 'zero-variance' for equal temperatures.
 *
 * Example: `q10FromActivationEnergy(83_144, 20)` is 3.08 (20 → 30 °C); over 25 → 35 °C it is 2.97.
 */
export function q10FromActivationEnergy(
  activationEnergy: number,
  lowerTemperatureC: number,
  upperTemperatureC: number = lowerTemperatureC + 10,
): number {
  if (!Number.isFinite(activationEnergy)) {
    throw new KineticsError('invalid-input', 'The activation energy must be a finite number (J/mol).');
  }
  const [lower, upper] = checkedInterval(lowerTemperatureC, upperTemperatureC);
  const perTenDegrees = 10 / (upperTemperatureC - lowerTemperatureC);
  return Math.exp((activationEnergy / MOLAR_GAS_CONSTANT) * (1 / lower - 1 / upper) * perTenDegrees);
}

/**
 * Activation energy (J/mol) implied by a Q10 over an interval, the inverse of
 * `q10FromActivationEnergy`: Ea = R·ln Q10·((θ₂ − θ₁)/10) / (1/T₁ − 1/T₂).
 *
 * Throws `KineticsError('non-positive-value')` for Q10 ≤ 0, 'zero-variance' for equal
 * temperatures, 'invalid-input' otherwise as above.
 *
 * Example: `activationEnergyFromQ10(2, 20)` is 51.2 kJ/mol; Q10 = 3 gives 81.2, Q10 = 4 gives 102.4.
 */
export function activationEnergyFromQ10(
  q10: number,
  lowerTemperatureC: number,
  upperTemperatureC: number = lowerTemperatureC + 10,
): number {
  if (!Number.isFinite(q10)) {
    throw new KineticsError('invalid-input', 'Q10 must be a finite number.');
  }
  if (q10 <= 0) {
    throw new KineticsError('non-positive-value', `Q10 must be positive; got ${q10}.`, { q10 });
  }
  const [lower, upper] = checkedInterval(lowerTemperatureC, upperTemperatureC);
  const span = (upperTemperatureC - lowerTemperatureC) / 10;
  return (MOLAR_GAS_CONSTANT * Math.log(q10) * span) / (1 / lower - 1 / upper);
}
