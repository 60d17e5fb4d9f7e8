import { describe, expect, it } from 'vitest';
import { meanKineticTemperature } from './mean-kinetic-temperature.ts';

/** Relative tolerance for the same formula evaluated two ways in double precision. */
const SAME_COMPUTATION = 1e-12;

describe('meanKineticTemperature (USP <1160> constants)', () => {
  it('equals the temperature when it is constant', () => {
    // Analytically exact: −ln(mean of identical exp(−c/T)) = c/T, so MKT = T.
    expect(meanKineticTemperature([25, 25, 25, 25]).meanKineticTemperatureC).toBeCloseTo(25, 10);
    expect(meanKineticTemperature([-18]).meanKineticTemperatureC).toBeCloseTo(-18, 10);
  });

  it('matches the USP <1160> formula, Haynes 1971; check values computed with the USP constants', () => {
    // Computed independently with the USP <1160> constants ΔH = 83.144 kJ/mol, R = 8.3144 J/(mol·K)
    // (not published values; docs/methods.md#mean-kinetic-temperature).
    expect(meanKineticTemperature([20, 30]).meanKineticTemperatureC).toBeCloseTo(26.26, 3);
    const monthly = meanKineticTemperature([18, 19, 21, 23, 25, 27, 29, 28, 26, 23, 20, 18]);
    expect(monthly.meanKineticTemperatureC).toBeCloseTo(23.828, 3);
    expect(monthly.arithmeticMeanC).toBeCloseTo(23.08, 2);
  });

  it('matches the two-temperature closed form evaluated directly', () => {
    // Haynes' formula (USP <1160>) written out for two equal periods, evaluated without log-sum-exp:
    // MKT = (ΔH/R) / −ln[(e^(−ΔH/RT₁) + e^(−ΔH/RT₂))/2], with ΔH/R = 83 144/8.3144 = 10 000 K.
    const c = 83_144 / 8.3144;
    const [t1, t2] = [5 + 273.15, 40 + 273.15];
    const closedForm = c / -Math.log((Math.exp(-c / t1) + Math.exp(-c / t2)) / 2) - 273.15;
    const result = meanKineticTemperature([5, 40]).meanKineticTemperatureC;
    expect(Math.abs(result - closedForm) / closedForm).toBeLessThan(SAME_COMPUTATION);
  });

  it('weights unequal periods by their duration', () => {
    // Time-weighted form (fa.wikipedia "Mean kinetic temperature"): 2 weeks at 20 °C
    // and 1 at 30 °C equal the equal-period list [20, 20, 30].
    const weighted = meanKineticTemperature([20, 30], { durations: [2, 1] });
    const listed = meanKineticTemperature([20, 20, 30]);
    expect(weighted.meanKineticTemperatureC).toBeCloseTo(listed.meanKineticTemperatureC, 12);
    expect(meanKineticTemperature([20, 90], { durations: [1, 0] }).meanKineticTemperatureC).toBeCloseTo(
      20,
      10,
    );
  });

  it('survives a huge ΔH where every exponential underflows (log-sum-exp)', () => {
    // With c = ΔH/R = 10⁷ K, e^(−c/T) underflows to 0 for every T here, so the direct formula gives
    // 0 K. Analytically −ln mean ≈ c/T_max + ln n (the warmest term dominates), so the MKT must be
    // c/(c/T_max + ln 2) to within e^(−c(1/T_min − 1/T_max)), i.e. exactly in double precision.
    const activationEnergy = 1e7 * 8.3144;
    const result = meanKineticTemperature([20, 30], { activationEnergy }).meanKineticTemperatureK;
    const expected = 1e7 / (1e7 / 303.15 + Math.log(2));
    expect(Math.abs(result - expected) / expected).toBeLessThan(SAME_COMPUTATION);
    expect(Number.isFinite(result)).toBe(true);
  });

  it('records the constants used and rejects bad input', () => {
    const result = meanKineticTemperature([25]);
    expect(result.activationEnergy).toBe(83_144);
    expect(result.gasConstant).toBe(8.3144);
    const code = (c: string) => expect.objectContaining({ code: c });
    expect(() => meanKineticTemperature([])).toThrow(code('too-few-points'));
    expect(() => meanKineticTemperature([25, -274])).toThrow(code('invalid-input'));
    expect(() => meanKineticTemperature([25, -273.15])).toThrow(code('invalid-input'));
    expect(() => meanKineticTemperature([25], { activationEnergy: 0 })).toThrow(code('invalid-input'));
    expect(() => meanKineticTemperature([25, 30], { durations: [1] })).toThrow(code('invalid-input'));
    expect(() => meanKineticTemperature([25, 30], { durations: [0, 0] })).toThrow(code('invalid-input'));
    expect(() => meanKineticTemperature([25, 30], { durations: [1, -1] })).toThrow(code('invalid-input'));
  });
});
