import { describe, expect, it } from 'vitest';
import { activationEnergyFromQ10, q10FromActivationEnergy, q10FromRateConstants } from './q10.ts';

describe('Q10', () => {
  it('matches the Q10 ↔ Ea table for 20 → 30 °C', () => {
    // Computed from ln Q10 = (Ea/R)(1/T₁ − 1/T₂); matches the table in Connors et al., Chemical Stability
    // of Pharmaceuticals (from memory):
    // Q10 = 2 ↔ 51.2 kJ/mol, 3 ↔ 81.2, 4 ↔ 102.4; Ea = 83.144 kJ/mol ↔ Q10 = 3.08 (2.97 for 25 → 35 °C).
    expect(activationEnergyFromQ10(2, 20) / 1000).toBeCloseTo(51.2, 1);
    expect(activationEnergyFromQ10(3, 20) / 1000).toBeCloseTo(81.2, 1);
    expect(activationEnergyFromQ10(4, 20) / 1000).toBeCloseTo(102.4, 1);
    // kcal/mol column of the same table (1 kcal = 4.184 kJ, thermochemical calorie): 12.2, 19.4, 24.5.
    expect(activationEnergyFromQ10(2, 20) / 4184).toBeCloseTo(12.2, 1);
    expect(activationEnergyFromQ10(3, 20) / 4184).toBeCloseTo(19.4, 1);
    expect(activationEnergyFromQ10(4, 20) / 4184).toBeCloseTo(24.5, 1);
    expect(q10FromActivationEnergy(83_144, 20)).toBeCloseTo(3.08, 2);
    expect(q10FromActivationEnergy(83_144, 25)).toBeCloseTo(2.97, 2);
  });

  it('follows the definition (R₂/R₁)^(10/(T₂ − T₁))', () => {
    // handwiki.org "Chemistry:Q10 (temperature coefficient)".
    expect(q10FromRateConstants(1, 20, 2, 30)).toBeCloseTo(2, 12);
    expect(q10FromRateConstants(1, 25, 4, 45)).toBeCloseTo(2, 12);
    expect(q10FromRateConstants(3, 30, 1, 20)).toBeCloseTo(3, 12);
    // The two directions of the Ea conversion invert each other over any interval.
    const energy = activationEnergyFromQ10(2.5, 5, 25);
    expect(q10FromActivationEnergy(energy, 5, 25)).toBeCloseTo(2.5, 12);
  });

  it('rejects equal temperatures, non-positive k or Q10 and impossible temperatures', () => {
    const code = (c: string) => expect.objectContaining({ code: c });
    expect(() => q10FromRateConstants(1, 25, 2, 25)).toThrow(code('zero-variance'));
    expect(() => q10FromRateConstants(0, 20, 2, 30)).toThrow(code('non-positive-value'));
    expect(() => q10FromRateConstants(1, -300, 2, 30)).toThrow(code('invalid-input'));
    expect(() => activationEnergyFromQ10(0, 20)).toThrow(code('non-positive-value'));
    expect(() => q10FromActivationEnergy(Number.NaN, 20)).toThrow(code('invalid-input'));
  });
});
