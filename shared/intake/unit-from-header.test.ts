import { describe, expect, it } from 'vitest';
import {
  temperatureUnitFromHeader,
  timeUnitFromHeader,
  unitTextOfHeader,
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
