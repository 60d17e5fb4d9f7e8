/**
 * Reads a measured number from a cell, accepting the decimal comma used across most of Europe.
 *
 * A numeric cell is taken as it is. Text is trimmed and read as an optional sign, digits with one
 * decimal separator ("." or ","), and an optional exponent ("1,5e-3"). A comma is always read as
 * a decimal separator, never a thousands separator: "1,234" is 1.234, because lab results are
 * rarely in the thousands and a thousands separator would be ambiguous. Anything else ("n/a",
 * "<LOQ", "12.3.4", a truth value, a date) is not a number, and the reason says why, for a
 * message beside the cell reference.
 *
 * Never throws; returns `{ ok: false, reason }` instead.
 *
 * Example: `parseNumberCell('98,7')` is `{ ok: true, value: 98.7 }`;
 * `parseNumberCell('n/a')` is `{ ok: false, reason: '"n/a" is not a number' }`.
 */
import { type GridCell, isBlankCell, isFormulaWithoutValue } from './sheet-grid.ts';

export type NumberCellResult = { ok: true; value: number } | { ok: false; blank: boolean; reason: string };

const NUMBER_PATTERN = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)(e[+-]?\d+)?$/i;

/** The message for a formula whose result the file did not store. */
export const FORMULA_WITHOUT_VALUE_REASON =
  'formula without a stored value — open and save the workbook in a spreadsheet program, or paste values';

export function parseNumberCell(cell: GridCell | undefined): NumberCellResult {
  if (isBlankCell(cell)) return { ok: false, blank: true, reason: 'is empty' };
  if (isFormulaWithoutValue(cell)) return { ok: false, blank: false, reason: FORMULA_WITHOUT_VALUE_REASON };
  if (typeof cell === 'number') {
    return Number.isFinite(cell)
      ? { ok: true, value: cell }
      : { ok: false, blank: false, reason: `${cell} is not a finite number` };
  }
  if (typeof cell === 'boolean')
    return { ok: false, blank: false, reason: `${cell ? 'TRUE' : 'FALSE'} is not a number` };
  if (cell instanceof Date) return { ok: false, blank: false, reason: 'is a date, not a number' };
  const text = String(cell).trim().replace(/\s+/g, '');
  if (NUMBER_PATTERN.test(text)) {
    const value = Number(text.replace(',', '.'));
    if (Number.isFinite(value)) return { ok: true, value };
  }
  return { ok: false, blank: false, reason: `"${String(cell).trim()}" is not a number` };
}
