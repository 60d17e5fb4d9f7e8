/**
 * A table export described as data: one column definition per column (its header, unit, value
 * accessor and type), so a sheet or a CSV is a list of columns and a list of rows instead of
 * hand-written cell code, and the CSV and the workbook built from the same list cannot disagree.
 *
 * The type says what a cell may hold and lets the compiler check it: a `number` column never
 * receives text (so a negative estimate stays a number cell, never guarded text), a `text` column
 * never receives a number, and `text-or-number` is for the few columns that mix them (an "About"
 * sheet's values, a figure's data). Text is guarded by the writers, not here.
 *
 * Example: `{ key: 'estimate', header: 'Estimate', type: 'number', value: (row) => row.estimate }`.
 */

/** What one exported cell holds: text, a number, or nothing (an empty cell). */
export type ExportCell = string | number | null | undefined;

interface ColumnBase {
  /** Heading shown in a workbook ("Temperature"). */
  header: string;
  /** Unit shown after the heading in parentheses ("°C" gives "Temperature (°C)"). */
  unit?: string;
  /** Machine-readable name, used where a CSV names its columns for programs ("temperatureC"). */
  key?: string;
  /** Column width in a workbook, in characters. */
  width?: number;
}

export type ExportColumn<Row> =
  | (ColumnBase & { type: 'text'; value: (row: Row) => string | null | undefined })
  | (ColumnBase & { type: 'number'; value: (row: Row) => number | null | undefined })
  | (ColumnBase & { type: 'text-or-number'; value: (row: Row) => string | number | null | undefined });

/** The heading with its unit: "Temperature (°C)". */
export function columnHeading(column: ExportColumn<never>): string {
  return column.unit ? `${column.header} (${column.unit})` : column.header;
}

/** One row as its cells, in column order. */
export function rowCells<Row>(columns: readonly ExportColumn<Row>[], row: Row): ExportCell[] {
  return columns.map((column) => column.value(row));
}
