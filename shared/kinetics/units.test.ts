import { describe, expect, it } from 'vitest';
import { KineticsError } from './numeric/kinetics-error.ts';
import {
  celsiusToKelvin,
  convertTime,
  DAYS_PER_MONTH,
  parseTimeUnit,
  rateConstantUnit,
  toCelsius,
  tryParseTemperatureUnit,
  tryParseTimeUnit,
} from './units.ts';

describe('time units', () => {
  it('converts with fixed factors: 1 h = 3600 s, 1 week = 7 d (SI Brochure 9th ed., Table 8)', () => {
    expect(convertTime(1, 'h', 's')).toBe(3600);
    expect(convertTime(2, 'week', 'd')).toBe(14);
    expect(convertTime(90, 'min', 'h')).toBeCloseTo(1.5, 12);
  });

  it('uses the Julian year of 365.25 d and a month of one twelfth of it (IAU Julian year)', () => {
    expect(convertTime(1, 'year', 'd')).toBe(365.25);
    expect(DAYS_PER_MONTH).toBe(30.4375);
    expect(convertTime(6, 'month', 'd')).toBeCloseTo(182.625, 10);
    expect(convertTime(convertTime(7.3, 'month', 'h'), 'h', 'month')).toBeCloseTo(7.3, 12);
  });

  it('reads the usual spellings (common practice)', () => {
    expect(tryParseTimeUnit('hrs')).toBe('h');
    expect(tryParseTimeUnit(' Hours ')).toBe('h');
    expect(tryParseTimeUnit('Months')).toBe('month');
    expect(tryParseTimeUnit('wk')).toBe('week');
    expect(tryParseTimeUnit('sec')).toBe('s');
    expect(tryParseTimeUnit('yr')).toBe('year');
    expect(tryParseTimeUnit('fortnight')).toBeNull();
  });

  it('refuses the ambiguous "m" and unknown units with a typed error', () => {
    expect(() => parseTimeUnit('m')).toThrow(/ambiguous/);
    try {
      parseTimeUnit('lightyear');
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(KineticsError);
      expect((error as KineticsError).code).toBe('invalid-input');
    }
  });
});

describe('temperature', () => {
  it('converts with T/K = θ/°C + 273.15 (SI Brochure 9th ed., §2.3.1)', () => {
    expect(celsiusToKelvin(25)).toBeCloseTo(298.15, 12);
    expect(toCelsius(313.15, 'K')).toBeCloseTo(40, 12);
    expect(tryParseTemperatureUnit('°C')).toBe('C');
    expect(tryParseTemperatureUnit('kelvin')).toBe('K');
    expect(tryParseTemperatureUnit('F')).toBeNull();
  });

  it('refuses temperatures below absolute zero', () => {
    expect(() => toCelsius(-300, 'C')).toThrow(KineticsError);
    expect(() => toCelsius(-1, 'K')).toThrow(/absolute zero/);
  });
});

describe('rate constant unit', () => {
  // k units M s⁻¹ (order 0), s⁻¹ (order 1), M⁻¹ s⁻¹ (order 2) — OpenStax Chemistry 2e §12.4.
  it('is valueUnit^(1−n)/timeUnit', () => {
    expect(rateConstantUnit(0, 'M', 's')).toBe('M/s');
    expect(rateConstantUnit(1, 'M', 's')).toBe('1/s');
    expect(rateConstantUnit(2, 'M', 's')).toBe('1/(M·s)');
    expect(rateConstantUnit(2, 'mg/mL', 'h')).toBe('1/((mg/mL)·h)');
    expect(rateConstantUnit(0, '% label claim', 'month')).toBe('(% label claim)/month');
    expect(rateConstantUnit(1.5, 'M', 's')).toBe('M^-0.5/s');
  });
});
