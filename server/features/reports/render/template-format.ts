import { formatPercent, formatSignificant } from '../../../../shared/figures/significant-figures.ts';
import { type ZonedParts, zonedParts } from '../../../../shared/time/zoned-time.ts';

/**
 * The text formats report templates print, as plain functions (the Handlebars helpers in
 * `template-helpers.ts` only adapt arguments to these). Numbers go through the same
 * `formatSignificant` as the analysis screen, so a value reads the same on screen and on paper.
 *
 * Reference for significant figures and the × 10ⁿ notation: NIST SP 811 (2008) §7.9, §10.5;
 * for dates: ISO 8601-1:2019 §5.4 (date and time of day with a UTC offset).
 */

/** Printed for a value the analysis could not estimate (null), instead of a dash or "NaN". */
export const NOT_ESTIMABLE_TEXT = 'not estimable';
export const MIN_DIGITS = 1;
export const MAX_DIGITS = 15;

export class TemplateValueError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'TemplateValueError';
  }
}

function checkDigits(helper: string, digits: unknown): number {
  if (typeof digits !== 'number' || !Number.isInteger(digits) || digits < MIN_DIGITS || digits > MAX_DIGITS) {
    throw new TemplateValueError(
      `${helper}: the number of significant figures must be a whole number from ${MIN_DIGITS} to ${MAX_DIGITS}.`,
    );
  }
  return digits;
}

function checkNumber(helper: string, value: unknown): number | null {
  if (value === null || value === undefined) return null;
  if (typeof value !== 'number')
    throw new TemplateValueError(`${helper}: expected a number, got ${typeof value}.`);
  return Number.isFinite(value) ? value : null;
}

const withUnit = (text: string, unit: unknown) =>
  typeof unit === 'string' && unit.trim() !== '' ? `${text} ${unit.trim()}` : text;

/**
 * A number to `digits` significant figures, with its unit; "not estimable" for null.
 * Example: significant(0.00062134, 3, '1/s') is "6.21 × 10⁻⁴ 1/s"; significant(-0, 2) is "0.0".
 */
export function significant(value: unknown, digits: unknown = 3, unit?: unknown): string {
  const figures = checkDigits('sig', digits);
  const number = checkNumber('sig', value);
  if (number === null) return NOT_ESTIMABLE_TEXT;
  // -0 and a value that is zero print as "0.0…", never "−0".
  return withUnit(formatSignificant(number === 0 ? 0 : number, figures), unit);
}

/**
 * An interval [low, high], both ends at `digits` significant figures, unit once at the end.
 * Example: interval([6.152e-4, 6.274e-4], 3, '1/s') is "6.15 × 10⁻⁴ to 6.27 × 10⁻⁴ 1/s".
 */
export function interval(bounds: unknown, digits: unknown = 3, unit?: unknown): string {
  const figures = checkDigits('interval', digits);
  if (bounds === null || bounds === undefined) return NOT_ESTIMABLE_TEXT;
  if (!Array.isArray(bounds) || bounds.length !== 2) {
    throw new TemplateValueError('interval: expected a pair [low, high].');
  }
  const low = checkNumber('interval', bounds[0]);
  const high = checkNumber('interval', bounds[1]);
  if (low === null || high === null) return NOT_ESTIMABLE_TEXT;
  const text = `${formatSignificant(low === 0 ? 0 : low, figures)} to ${formatSignificant(high === 0 ? 0 : high, figures)}`;
  return withUnit(text, unit);
}

/** A fraction as a percentage. Example: percent(0.1234, 1) is "12.3 %"; percent(null) "not estimable". */
export function percent(fraction: unknown, decimals: unknown = 1): string {
  if (typeof decimals !== 'number' || !Number.isInteger(decimals) || decimals < 0 || decimals > 6) {
    throw new TemplateValueError('percent: decimals must be a whole number from 0 to 6.');
  }
  const number = checkNumber('percent', fraction);
  if (number === null) return NOT_ESTIMABLE_TEXT;
  const text = formatPercent(number, decimals);
  return /^−0(\.0*)? %$/.test(text) ? text.slice(1) : text;
}

function toDate(helper: string, value: unknown): Date | null {
  if (value === null || value === undefined) return null;
  const date = value instanceof Date ? value : typeof value === 'string' ? new Date(value) : null;
  if (!date || Number.isNaN(date.getTime())) throw new TemplateValueError(`${helper}: expected a date.`);
  return date;
}

function partsIn(date: Date, timeZone: string): ZonedParts {
  try {
    return zonedParts(date, timeZone);
  } catch {
    throw new TemplateValueError(`isoDate: "${timeZone}" is not an IANA time zone.`);
  }
}

/**
 * ISO 8601 date-time in the organisation's IANA time zone, with its offset.
 * Example: isoDateTime(new Date('2026-12-01T14:05:00Z'), 'Europe/Berlin') is "2026-12-01T15:05:00+01:00".
 */
export function isoDateTime(value: unknown, timeZone: string): string {
  const date = toDate('isoDate', value);
  if (date === null) return NOT_ESTIMABLE_TEXT;
  const parts = partsIn(date, timeZone);
  return `${parts.date}T${parts.time}${parts.offset}`;
}

/** The calendar day (ISO 8601) in the time zone. Example: isoDay(new Date('2026-12-01T23:30:00Z'), 'Asia/Tokyo') is "2026-12-02". */
export function isoDay(value: unknown, timeZone: string): string {
  const date = toDate('isoDay', value);
  return date === null ? NOT_ESTIMABLE_TEXT : partsIn(date, timeZone).date;
}
