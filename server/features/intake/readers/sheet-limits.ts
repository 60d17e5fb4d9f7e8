/**
 * The limits an uploaded file is read within, and the upload's dry run: whether the cells read
 * could be imported by any column mapping at all.
 *
 * Limits (our choice, far above any stability export, which has a few columns per result — time,
 * result, batch, temperature, a few notes — and at most some 100,000 rows): a CSV line of at most
 * `MAX_LINE_CHARACTERS`, at most `MAX_COLUMNS` columns in any row of a sheet, and at most
 * `MAX_CELLS` cells (empty ones inside a row included) in the whole file. A file past one of them
 * is refused naming the line, or the sheet and row.
 *
 * Importable: every mapping needs, in one sheet, two rows that each hold a time and a result
 * (numbers, dates, or formulas whose value the import will ask for), because a rate needs results
 * at two different times. A sheet whose rows are all text (a header only), or that has a single
 * such row (a single point), cannot be imported by any mapping, so the file is refused at upload
 * naming each sheet and the rows it has. The check is deliberately generous: a file that passes
 * may still be refused at import with the cells named (two rows at one time, say).
 *
 * Throws `FileReadError('too-large-to-read')` or `FileReadError('nothing-to-import')`.
 *
 * Example: `checkImportable([{ name: 'single', rows: [['Month', 'Assay'], ['0', '100.1']] }])`
 * throws 'The sheet "single" has a single row of results (row 2) …'.
 */
import { columnLetter } from '../../../../shared/intake/cell-reference.ts';
import { parseDateCell } from '../../../../shared/intake/parse-date-cell.ts';
import { parseNumberCell } from '../../../../shared/intake/parse-number-cell.ts';
import {
  type GridCell,
  isFormulaWithoutValue,
  type SheetGrid,
} from '../../../../shared/intake/sheet-grid.ts';
import { FileReadError } from './file-read-error.ts';

/** Longest line of a CSV file, in characters. */
export const MAX_LINE_CHARACTERS = 100_000;
/** Most columns in any row of a sheet. */
export const MAX_COLUMNS = 1_000;
/** Most cells in a file, all sheets together. */
export const MAX_CELLS = 2_000_000;

const count = (value: number) => value.toLocaleString('en-GB');

export function columnsError(sheet: string, row: number, columns: number): FileReadError {
  return new FileReadError(
    'too-large-to-read',
    `Row ${row} of the sheet "${sheet}" has ${count(columns)} columns (to column ${columnLetter(columns - 1)}); Rateledger reads at most ${count(MAX_COLUMNS)} columns in a sheet. Remove the columns that are not stability results, or check that the file's delimiter is a comma, semicolon or tab, and upload again.`,
  );
}

export function cellsError(sheet: string, row: number): FileReadError {
  return new FileReadError(
    'too-large-to-read',
    `The file holds more than ${count(MAX_CELLS)} cells (reached at row ${row} of the sheet "${sheet}"); Rateledger reads at most that many. Delete the sheets, rows or columns that are not stability results, and upload again.`,
  );
}

/** 1-based number and length of the first line longer than `MAX_LINE_CHARACTERS`, or null. */
export function firstLongLine(text: string): { line: number; length: number } | null {
  let line = 1;
  let start = 0;
  for (let index = 0; index <= text.length; index += 1) {
    const code = index < text.length ? text.charCodeAt(index) : 10;
    if (code !== 10 && code !== 13) continue;
    if (index - start > MAX_LINE_CHARACTERS) return { line, length: index - start };
    // CRLF is one line end; a lone CR (old Mac files) or LF is one too.
    if (code === 13 && text.charCodeAt(index + 1) === 10) index += 1;
    line += 1;
    start = index + 1;
  }
  return null;
}

export function longLineError(found: { line: number; length: number }): FileReadError {
  return new FileReadError(
    'too-large-to-read',
    `Line ${found.line} of the CSV file is ${count(found.length)} characters long; Rateledger reads lines of at most ${count(MAX_LINE_CHARACTERS)} characters. Check that the file has one line per row (it may have been saved without line breaks), and upload again.`,
  );
}

/** Refuses rows past `MAX_COLUMNS` or, with `cellsBefore` from earlier sheets, past `MAX_CELLS`; the cells counted. */
export function checkRecordLimits(
  rows: readonly (readonly unknown[])[],
  sheet: string,
  cellsBefore = 0,
): number {
  let cells = cellsBefore;
  for (let index = 0; index < rows.length; index += 1) {
    const length = rows[index]!.length;
    if (length > MAX_COLUMNS) throw columnsError(sheet, index + 1, length);
    cells += length;
    if (cells > MAX_CELLS) throw cellsError(sheet, index + 1);
  }
  return cells;
}

/** Refuses sheets past `MAX_COLUMNS` or, together, past `MAX_CELLS`. */
export function checkSheetLimits(sheets: readonly SheetGrid[]): void {
  let cells = 0;
  for (const sheet of sheets) cells = checkRecordLimits(sheet.rows, sheet.name, cells);
}

/** A cell that could be a time or a result for some mapping. */
function measured(cell: GridCell | undefined): boolean {
  return isFormulaWithoutValue(cell) || parseNumberCell(cell).ok || parseDateCell(cell).ok;
}

/** 1-based numbers of the rows holding two or more measured cells (at most `limit` of them). */
function resultRows(sheet: SheetGrid, limit: number): number[] {
  const found: number[] = [];
  for (let index = 0; index < sheet.rows.length && found.length < limit; index += 1) {
    let measuredCells = 0;
    for (const cell of sheet.rows[index]!) {
      if (measured(cell)) measuredCells += 1;
      if (measuredCells === 2) break;
    }
    if (measuredCells === 2) found.push(index + 1);
  }
  return found;
}

function describeSheet(sheet: SheetGrid, rows: number[]): string {
  if (rows.length === 1) return `"${sheet.name}" has a single row of results (row ${rows[0]})`;
  const filled = sheet.rows.filter((row) => row.some((cell) => cell !== null)).length;
  if (filled === 0) return `"${sheet.name}" is empty`;
  return `"${sheet.name}" has no row of results (its ${count(filled)} ${filled === 1 ? 'row holds' : 'rows hold'} text only, such as a header)`;
}

/** Refuses a file no mapping could import: no sheet has two rows with a time and a result. */
export function checkImportable(sheets: readonly SheetGrid[]): void {
  const described: string[] = [];
  for (const sheet of sheets) {
    const rows = resultRows(sheet, 2);
    if (rows.length >= 2) return;
    described.push(describeSheet(sheet, rows));
  }
  const what =
    described.length === 1
      ? `The sheet ${described[0]}`
      : `No sheet can be imported: ${described.join('; ')}`;
  throw new FileReadError(
    'nothing-to-import',
    `${what}. A rate needs results at two or more times, each row with its time and its result as numbers or dates, so there is nothing to import. Check that you chose the right file, or add the missing results.`,
  );
}
