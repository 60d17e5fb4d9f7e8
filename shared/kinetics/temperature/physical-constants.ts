/**
 * Physical constants of the temperature models, with their sources.
 *
 * Since the 2019 revision of the SI the Boltzmann constant, the Planck constant and the Avogadro
 * constant are exact by definition, so the molar gas constant R = N_A·k_B is exact too
 * (BIPM, SI Brochure 9th ed. 2019, Table 1; CRC Handbook "Fundamental Physical Constants").
 * The Arrhenius and Eyring fits use these exact values.
 *
 * The mean kinetic temperature uses the constants printed in USP <1160> instead
 * (ΔH = 83.144 kJ/mol, R = 8.3144 J/(mol·K), so ΔH/R = 10 000 K exactly), because a compliance
 * number should reproduce the pharmacopoeial calculation digit for digit; with the exact R the
 * ratio would be 83 144/8.314 462 618… = 9 999.92 K (docs/methods.md#mean-kinetic-temperature).
 */

/** Boltzmann constant k_B in J/K, exact since the 2019 SI. */
export const BOLTZMANN_CONSTANT = 1.380649e-23;

/** Avogadro constant N_A in 1/mol, exact since the 2019 SI. */
export const AVOGADRO_CONSTANT = 6.02214076e23;

/** Molar gas constant R in J/(mol·K): N_A·k_B = 8.314 462 618 153 24…, exact since the 2019 SI. */
export const MOLAR_GAS_CONSTANT = AVOGADRO_CONSTANT * BOLTZMANN_CONSTANT;

/** Planck constant h in J·s, exact since the 2019 SI. */
export const PLANCK_CONSTANT = 6.62607015e-34;

/** Gas constant printed in USP <1160> for the mean kinetic temperature, J/(mol·K). */
export const USP_MEAN_KINETIC_TEMPERATURE_GAS_CONSTANT = 8.3144;

/** Default heat of activation in USP <1160>, J/mol ("83.144 kJ per mol"). */
export const USP_MEAN_KINETIC_TEMPERATURE_ACTIVATION_ENERGY = 83_144;
