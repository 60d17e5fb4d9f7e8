import { describe, expect, it } from 'vitest';
import {
  temperatureUnitFromHeader,
  timeUnitFromHeader,
  unitTextOfHeader,
  valueUnitForStudy,
  valueUnitFromHeader,
} from './unit-from-header.ts';

// Header conventions: "quantity (unit)" and "quantity / unit" (ISO 80000-1:2022 §7.1, the
// quantity-calculus form for table headings); bare unit words as headers are common practice.
describe('units stated in headers', () => {
  it('reads bracketed and slash forms', () => {
    expect(unitTextOfHeader('Time (h)')).toBe('h');
    expect(unitTextOfHeader('Assay [% label claim]')).toBe('% label claim');
    expect(unitTextOfHeader('T / K')).toBe('K');
    expect(unitTextOfHeader('Assay')).toBeNull();
  });

  it('reads time units, including bare unit words', () => {
    expect(timeUnitFromHeader('Time (hrs)')).toBe('h');
    expect(timeUnitFromHeader('Months')).toBe('month');
    expect(timeUnitFromHeader('Month')).toBe('month');
    expect(timeUnitFromHeader('Time')).toBeNull();
    expect(timeUnitFromHeader('Time (m)')).toBeNull();
  });

  it('reads value and temperature units', () => {
    expect(valueUnitFromHeader('Assay (% label claim)')).toBe('% label claim');
    expect(temperatureUnitFromHeader('Temperature (°C)')).toBe('C');
    expect(temperatureUnitFromHeader('Lagerung °C')).toBe('C');
    expect(temperatureUnitFromHeader('T / K')).toBe('K');
    expect(temperatureUnitFromHeader('Storage')).toBeNull();
  });
});

// Issue 13 §8: "% LC" in the header and "% of label claim" on the study are one unit (LC is the
// usual abbreviation of label claim, common practice); one label is shown for it.
describe('the value unit a mapping starts with', () => {
  it("keeps the study's label when the header spells the same unit otherwise", () => {
    expect(valueUnitForStudy('Assay (% LC)', '% of label claim')).toBe('% of label claim');
    expect(valueUnitForStudy('Assay [% label claim]', '% of label claim')).toBe('% of label claim');
    expect(valueUnitForStudy('Assay (% of label claim)', '% LC')).toBe('% LC');
  });

  it("takes the header's unit when it names another unit, and the study's when it names none", () => {
    expect(valueUnitForStudy('Conc. (mg/mL)', '% of label claim')).toBe('mg/mL');
    expect(valueUnitForStudy('Impurity A (% area)', '% of label claim')).toBe('% area');
    expect(valueUnitForStudy('Assay', '% of label claim')).toBe('% of label claim');
  });
});
