/**
 * Units of time and temperature, and the unit of a rate constant.
 *
 * Stability data arrive in whatever unit the protocol used (minutes for a spectrophotometer run,
 * months for a long-term study), so the engine names a small set of time units, reads the common
 * spellings of each, converts between them with fixed factors, and writes the unit of k for a
 * reaction of order n as valueUnit^(1 − n) / timeUnit (OpenStax Chemistry 2e §12.4 "Integrated Rate
 * Laws"; see docs/methods.md#conventions).
 *
 * Convention for months and years (stated in every method statement):
 * - For converting a number from one unit to another, 1 year = 365.25 d (the Julian year, the
 *   astronomical convention; IAU) and 1 month = 1/12 year = 30.4375 d. A fixed factor keeps
 *   conversions reversible and independent of the calendar.
 * - For turning sampling dates into elapsed time, months and years are counted on the calendar
 *   (15 Jan → 15 Apr = 3 months exactly), because stability pull points are scheduled in calendar
 *   months (common practice); see `shared/intake/elapsed-time.ts`.
 *
 * Throws `KineticsError('invalid-input')` for a unit spelling it cannot read (including the
 * ambiguous "m", which could be minutes or months) and for temperatures below absolute zero.
 *
 * Example: `convertTime(6, 'month', 'd')` is 182.625; `parseTimeUnit('hrs')` is 'h';
 * `rateConstantUnit(2, 'mg/mL', 'h')` is '1/((mg/mL)·h)'.
 */
import { KineticsError } from './numeric/kinetics-error.ts';

/** The time units the engine names, shortest first. */
export const TIME_UNITS = ['s', 'min', 'h', 'd', 'week', 'month', 'year'] as const;
export type TimeUnit = (typeof TIME_UNITS)[number];

/** Days in the Julian year, the fixed year used for unit conversion. */
export const DAYS_PER_YEAR = 365.25;
/** Days in a month for unit conversion: one twelfth of the Julian year. */
export const DAYS_PER_MONTH = DAYS_PER_YEAR / 12;

const SECONDS_PER_DAY = 86_400;

/** Length of each time unit in seconds. */
export const SECONDS_PER_TIME_UNIT: Readonly<Record<TimeUnit, number>> = {
  s: 1,
  min: 60,
  h: 3_600,
  d: SECONDS_PER_DAY,
  week: 7 * SECONDS_PER_DAY,
  month: DAYS_PER_MONTH * SECONDS_PER_DAY,
  year: DAYS_PER_YEAR * SECONDS_PER_DAY,
};

const TIME_UNIT_SPELLINGS: Readonly<Record<string, TimeUnit>> = {
  s: 's',
  sec: 's',
  secs: 's',
  second: 's',
  seconds: 's',
  min: 'min',
  mins: 'min',
  minute: 'min',
  minutes: 'min',
  h: 'h',
  hr: 'h',
  hrs: 'h',
  hour: 'h',
  hours: 'h',
  d: 'd',
  day: 'd',
  days: 'd',
  w: 'week',
  wk: 'week',
  wks: 'week',
  week: 'week',
  weeks: 'week',
  mo: 'month',
  mon: 'month',
  mth: 'month',
  mths: 'month',
  month: 'month',
  months: 'month',
  y: 'year',
  yr: 'year',
  yrs: 'year',
  year: 'year',
  years: 'year',
};

/** Reads a time-unit spelling ("hrs", "Months", "wk"), or returns null when it is not one. */
export function tryParseTimeUnit(text: string): TimeUnit | null {
  const key = text.trim().toLowerCase().replace(/\.$/, '');
  return TIME_UNIT_SPELLINGS[key] ?? null;
}

/** Reads a time-unit spelling; throws `KineticsError('invalid-input')` naming the accepted units. */
export function parseTimeUnit(text: string): TimeUnit {
  const unit = tryParseTimeUnit(text);
  if (unit !== null) return unit;
  const ambiguous = text.trim() === 'm' || text.trim() === 'M';
  throw new KineticsError(
    'invalid-input',
    ambiguous
      ? `Time unit "${text}" is ambiguous (minutes or months?); write "min" or "month".`
      : `Time unit "${text}" is not known; use one of ${TIME_UNITS.join(', ')}.`,
    { unit: text },
  );
}

/** Converts a time (or duration) from one unit to another with the fixed factors above. */
export function convertTime(value: number, from: TimeUnit, to: TimeUnit): number {
  if (from === to) return value;
  return (value * SECONDS_PER_TIME_UNIT[from]) / SECONDS_PER_TIME_UNIT[to];
}

/** Offset between the Celsius and kelvin scales (SI Brochure, 9th ed., §2.3.1). */
export const KELVIN_AT_ZERO_CELSIUS = 273.15;

export type TemperatureUnit = 'C' | 'K';

/**
 * Decimal places kept when kelvin become °C, so 298.15 K reads as 25 °C rather than
 * 25.000000000000004 (binary rounding); far below any thermometer's resolution.
 */
const KELVIN_ROUNDING_DIGITS = 9;

/** Reads "C", "°C", "degC", "celsius", "K", "kelvin"; returns null for anything else. */
export function tryParseTemperatureUnit(text: string): TemperatureUnit | null {
  const key = text
    .trim()
    .toLowerCase()
    .replace(/^°|^deg\s*/, '');
  if (key === 'c' || key === 'celsius') return 'C';
  if (key === 'k' || key === 'kelvin') return 'K';
  return null;
}

/** Converts a temperature to degrees Celsius; throws below absolute zero. */
export function toCelsius(value: number, unit: TemperatureUnit): number {
  const celsius =
    unit === 'K' ? Number((value - KELVIN_AT_ZERO_CELSIUS).toFixed(KELVIN_ROUNDING_DIGITS)) : value;
  if (!Number.isFinite(celsius) || celsius < -KELVIN_AT_ZERO_CELSIUS) {
    throw new KineticsError(
      'invalid-input',
      `Temperature ${value} ${unit === 'K' ? 'K' : '°C'} is below absolute zero.`,
      {
        value,
        unit,
      },
    );
  }
  return celsius;
}

/** Converts degrees Celsius to kelvin; throws below absolute zero. */
export function celsiusToKelvin(celsius: number): number {
  return toCelsius(celsius, 'C') + KELVIN_AT_ZERO_CELSIUS;
}

/** Wraps a compound unit in parentheses so an exponent or divisor applies to all of it. */
function grouped(unit: string): string {
  return /[\s/·*^]/.test(unit.trim()) ? `(${unit.trim()})` : unit.trim();
}

/**
 * Unit of the rate constant of an n-th order law −dC/dt = k·Cⁿ: valueUnit^(1 − n) / timeUnit.
 * Order 0 gives "valueUnit/timeUnit", order 1 "1/timeUnit", order 2 "1/(valueUnit·timeUnit)".
 */
export function rateConstantUnit(order: number, valueUnit: string, timeUnit: string): string {
  const value = grouped(valueUnit);
  const time = grouped(timeUnit);
  const exponent = 1 - order;
  if (exponent === 0) return `1/${time}`;
  if (exponent === 1) return `${value}/${time}`;
  if (exponent === -1) return `1/(${value}·${time})`;
  return `${value}^${exponent}/${time}`;
}
