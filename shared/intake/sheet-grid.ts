/**
 * The cell grid every file reader produces and the intake reads: one sheet as rows of cells.
 *
 * A reader (CSV, XLSX) turns a file into `SheetGrid`s and nothing else, so the intake rules are
 * the same for every format and can run in the browser as well as on the server. Rows and columns
 * are 0-based in the arrays; cell references shown to people are 1-based, as in a spreadsheet.
 *
 * Example: `{ name: 'Sheet1', rows: [['Time', 'Assay'], [0, 100.1], [3, '98,7']] }`.
 */

/**
 * A formula whose result the file does not store (a workbook written by a program that does not
 * compute formulas). The intake reports it; it never guesses a value.
 */
export interface FormulaWithoutValue {
  formulaWithoutValue: string;
}

/** One cell: empty (null), a number, text, a truth value, a date-time, or an uncomputed formula. */
export type GridCell = string | number | boolean | Date | null | FormulaWithoutValue;

/** A merged block of cells, 0-based and inclusive; its content sits in the top-left cell. */
export interface MergedRange {
  top: number;
  left: number;
  bottom: number;
  right: number;
}

export interface SheetGrid {
  name: string;
  rows: GridCell[][];
  /** Merged blocks, when the format has them (XLSX); CSV has none. */
  merges?: MergedRange[];
}

/** True for the marker a reader leaves where a formula has no stored result. */
export function isFormulaWithoutValue(cell: GridCell | undefined): cell is FormulaWithoutValue {
  return (
    typeof cell === 'object' && cell !== null && !(cell instanceof Date) && 'formulaWithoutValue' in cell
  );
}

/** True for an empty cell: null, missing, or text that is only white space. */
export function isBlankCell(cell: GridCell | undefined): boolean {
  return cell === null || cell === undefined || (typeof cell === 'string' && cell.trim() === '');
}
