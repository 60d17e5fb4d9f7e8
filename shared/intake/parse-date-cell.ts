/**
 * Reads a sampling date or date-time from a cell.
 *
 * A date cell (a spreadsheet date, which readers return as a `Date` holding the wall-clock time
 * in UTC) is taken as it is. Text is accepted in two unambiguous forms: ISO 8601
 * ("2024-03-15", "2024-03-15 14:30", "2024-03-15T14:30:00") and day.month.year with dots
 * ("15.03.2024", "15.03.2024 14:30"). Slash dates ("03/04/2024") are refused because they read
 * differently in different countries; the reason asks for ISO form. Times without a zone are
 * taken as UTC wall-clock time, matching spreadsheet dates.
 *
 * Never throws; returns `{ ok: false, reason }` instead.
 *
 * Example: `parseDateCell('15.03.2024')` is `{ ok: true, value: new Date('2024-03-15T00:00:00Z') }`.
 */

import { FORMULA_WITHOUT_VALUE_REASON } from './parse-number-cell.ts';
import { type GridCell, isBlankCell, isFormulaWithoutValue } from './sheet-grid.ts';

export type DateCellResult = { ok: true; value: Date } | { ok: false; blank: boolean; reason: string };

const ISO_PATTERN = /^(\d{4})-(\d{2})-(\d{2})(?:[ T](\d{2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?)?Z?$/;
const DOTTED_PATTERN = /^(\d{1,2})\.(\d{1,2})\.(\d{4})(?: (\d{1,2}):(\d{2})(?::(\d{2}))?)?$/;

function fromParts(year: number, month: number, day: number, hour: number, minute: number, second: number) {
  const value = new Date(Date.UTC(year, month - 1, day, hour, minute, 0) + second * 1000);
  const valid =
    value.getUTCFullYear() === year && value.getUTCMonth() === month - 1 && value.getUTCDate() === day;
  return valid && hour < 24 && minute < 60 && second < 60 ? value : null;
}

export function parseDateCell(cell: GridCell | undefined): DateCellResult {
  if (isBlankCell(cell)) return { ok: false, blank: true, reason: 'is empty' };
  if (isFormulaWithoutValue(cell)) return { ok: false, blank: false, reason: FORMULA_WITHOUT_VALUE_REASON };
  if (cell instanceof Date) {
    return Number.isNaN(cell.getTime())
      ? { ok: false, blank: false, reason: 'is not a valid date' }
      : { ok: true, value: cell };
  }
  const text = String(cell).trim();
  const iso = ISO_PATTERN.exec(text);
  const dotted = iso ? null : DOTTED_PATTERN.exec(text);
  const parts = iso
    ? [iso[1], iso[2], iso[3], iso[4], iso[5], iso[6]]
    : dotted
      ? [dotted[3], dotted[2], dotted[1], dotted[4], dotted[5], dotted[6]]
      : null;
  if (parts) {
    const [year, month, day, hour, minute, second] = parts.map((part) => Number(part ?? 0)) as [
      number,
      number,
      number,
      number,
      number,
      number,
    ];
    const value = fromParts(year, month, day, hour, minute, second);
    if (value) return { ok: true, value };
    return { ok: false, blank: false, reason: `"${text}" is not a valid calendar date` };
  }
  const hint = /^\d{1,2}\/\d{1,2}\/\d{2,4}/.test(text)
    ? ' (slash dates read differently in different countries; write 2024-03-15)'
    : ' (write it as 2024-03-15 or 2024-03-15 14:30)';
  return { ok: false, blank: false, reason: `"${text}" is not a date${hint}` };
}
