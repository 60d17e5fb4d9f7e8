/**
 * Input of the temperature models: a rate constant measured (fitted) at one temperature.
 * Shared by the Arrhenius and Eyring fits.
 */
export interface RateConstantMeasurement {
  /** Storage or reaction temperature in degrees Celsius. */
  temperatureC: number;
  /** Rate constant k at that temperature, in any unit, the same for every measurement; must be > 0. */
  rateConstant: number;
  /** Standard error of k, needed only for inverse-variance weighting. */
  rateConstantStandardError?: number;
}

/**
 * How the points of a ln k against 1/T line are weighted.
 * - 'unweighted' (the default): every rate constant counts the same, as in the textbook plot.
 * - 'inverse-variance': wᵢ = (kᵢ / se(kᵢ))², which is 1/Var(ln kᵢ) by the delta method
 *   (Var(ln k) ≈ Var(k)/k²). The weights are relative: the residual scatter still sets the scale
 *   of the standard errors, as in ordinary weighted least squares.
 */
export type TemperatureFitWeighting = 'unweighted' | 'inverse-variance';
