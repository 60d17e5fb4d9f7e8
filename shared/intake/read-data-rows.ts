/**
 * Reads the mapped cells of every data row of a sheet into typed rows, collecting every problem.
 *
 * A row whose mapped cells are all blank is skipped (blank separator rows are common in lab
 * sheets). A row with a time but no value is a planned pull point not yet tested: it is skipped
 * with a warning. A negative value in a unit that cannot be negative (`valueCannotBeNegative`)
 * is kept as written with a warning on its cell (the first `MAX_NEGATIVE_VALUE_NOTES`, then one
 * line counting the rest). Every other unreadable cell is a problem tied to its cell reference; reading
 * goes on so the analyst sees all problems at once. Cells inside a merged block read the block's
 * content (a batch name or a time written once over several replicate rows).
 *
 * A value cell may report a result below a limit ("<LOQ", "< 0.05": `parse-censored-cell.ts`);
 * it is read as censored, never as a number. With several value columns (the wide layout: one
 * column per attribute) a row gives one data row per value column, each with its attribute; a
 * blank cell in one of them is skipped with a warning and the row's other values are kept. In the
 * long layout the attribute of each row is read from its attribute column; a blank one is a
 * problem on its cell.
 *
 * Never throws; problems and warnings are returned.
 *
 * Example: the row `[3, '98,7', 'B-01']` with time in A and value in B reads as
 * `{ rowIndex, time: 3, value: 98.7, seriesLabel: 'B-01', ... }`.
 */
import { toCelsius } from '../kinetics/units.ts';
import { columnLetter, sheetPrefix } from './cell-reference.ts';
import type { ColumnMapping } from './column-mapping.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import { valueCannotBeNegative } from './non-negative-unit.ts';
import { type CensoredCell, parseCensoredCell } from './parse-censored-cell.ts';
import { parseDateCell } from './parse-date-cell.ts';
import { FORMULA_WITHOUT_VALUE_REASON, parseNumberCell } from './parse-number-cell.ts';
import { cellText } from './resolve-column.ts';
import {
  type GridCell,
  isBlankCell,
  isFormulaWithoutValue,
  type MergedRange,
  type SheetGrid,
} from './sheet-grid.ts';

/** Negative values named cell by cell; the rest are counted in one line. */
export const MAX_NEGATIVE_VALUE_NOTES = 20;

export interface MappedColumns {
  time: number;
  value: number;
  series?: number;
  temperature?: number;
  replicate?: number;
  /** Long layout: the column naming the attribute of each row. */
  attribute?: number;
  /** Wide layout: the value columns after `value`, each with its attribute and unit. */
  moreValues?: { column: number; attribute: string; unit: string }[];
}

/** Every column index a mapping reads, the further value columns included. */
export function mappedColumnIndexes(columns: MappedColumns): number[] {
  const indexes = [columns.time, columns.value];
  for (const column of [columns.series, columns.temperature, columns.replicate, columns.attribute])
    if (column !== undefined) indexes.push(column);
  for (const entry of columns.moreValues ?? []) indexes.push(entry.column);
  return indexes;
}

type ValueCellResult =
  | { ok: true; value: number; censored?: CensoredCell }
  | { ok: false; blank: boolean; reason: string };

/** A value cell: a result below a limit, or a number. */
function parseValueCell(cell: GridCell | undefined): ValueCellResult {
  const censored = parseCensoredCell(cell);
  if (censored === null) return parseNumberCell(cell);
  return censored.ok ? censored : { ok: false, blank: false, reason: censored.reason };
}

export interface DataRow {
  rowIndex: number;
  /** Elapsed time (elapsed format) or the sampling date (date-time format). */
  time: number | Date;
  value: number;
  valueCell: string;
  /** The attribute the value measures, as the mapping or the attribute cell names it. */
  attribute?: string;
  /** Set when the cell reported a result below a limit; `value` is then the limit or 0. */
  censored?: CensoredCell;
  seriesLabel?: string;
  temperatureC?: number;
  replicateLabel?: string;
}

export interface DataRowsResult {
  rows: DataRow[];
  problems: IntakeProblem[];
  warnings: IntakeProblem[];
}

/** Merged blocks that cover one of the mapped columns; the only ones a mapped cell can be in. */
function mergesOnColumns(sheet: SheetGrid, columns: readonly number[]): MergedRange[] {
  return (sheet.merges ?? []).filter((range) =>
    columns.some((column) => range.left <= column && column <= range.right),
  );
}

function cellAt(
  sheet: SheetGrid,
  merges: readonly MergedRange[],
  rowIndex: number,
  column: number,
): GridCell | undefined {
  if (merges.length > 0) {
    const merge = merges.find(
      (range) =>
        range.top <= rowIndex && rowIndex <= range.bottom && range.left <= column && column <= range.right,
    );
    if (merge) return sheet.rows[merge.top]?.[merge.left];
  }
  return sheet.rows[rowIndex]?.[column];
}

export function readDataRows(
  sheet: SheetGrid,
  mapping: ColumnMapping,
  columns: MappedColumns,
): DataRowsResult {
  const rows: DataRow[] = [];
  const problems: IntakeProblem[] = [];
  const warnings: IntakeProblem[] = [];
  const mapped = mappedColumnIndexes(columns);
  const merges = mergesOnColumns(sheet, mapped);
  // References are built from the sheet prefix and column letters worked out once: a 100,000-row
  // sheet needs two per row (the same text `cellReference` gives).
  const prefix = `${sheetPrefix(sheet.name)}!`;
  const letters = new Map(mapped.map((column) => [column, columnLetter(column)]));
  const reference = (rowIndex: number, column: number) =>
    `${prefix}${letters.get(column) ?? columnLetter(column)}${rowIndex + 1}`;
  const datetime = mapping.timeFormat === 'datetime';
  const lowestTemperature = mapping.temperatureUnit === 'K' ? 0 : -273.15;
  const temperatureSymbol = mapping.temperatureUnit === 'K' ? 'K' : '°C';
  const valueColumns = [
    { column: columns.value, attribute: mapping.valueAttribute, unit: mapping.valueUnit },
    ...(columns.moreValues ?? []),
  ].map((entry) => ({ ...entry, nonNegative: valueCannotBeNegative(entry.unit) }));
  const several = valueColumns.length > 1;
  const valueResults: ValueCellResult[] = [];
  const negatives: { rowIndex: number; column: number }[] = [];
  let rowProblems: IntakeProblem[] = [];
  let rowIndex = 0;
  const cell = (column: number) => cellAt(sheet, merges, rowIndex, column);
  const report = (column: number, message: string) =>
    rowProblems.push(intakeProblem(reference(rowIndex, column), message));
  const label = (column: number | undefined, what: string): string | undefined => {
    if (column === undefined) return undefined;
    const content = cell(column);
    if (isFormulaWithoutValue(content)) {
      report(column, FORMULA_WITHOUT_VALUE_REASON);
      return undefined;
    }
    const text = cellText(content);
    if (text === '') report(column, `no ${what} given`);
    return text;
  };

  for (rowIndex = Math.max(mapping.headerRow, 0); rowIndex < sheet.rows.length; rowIndex += 1) {
    let blank = true;
    for (const column of mapped) {
      if (!isBlankCell(cell(column))) {
        blank = false;
        break;
      }
    }
    if (blank) continue;
    if (rowProblems.length > 0) rowProblems = [];

    const timeCell = cell(columns.time);
    const timeResult = datetime ? parseDateCell(timeCell) : parseNumberCell(timeCell);
    // One array for every row, filled in place, and plain loops: this runs 100,000 times.
    let allBlank = true;
    for (let index = 0; index < valueColumns.length; index += 1) {
      const result = parseValueCell(cell(valueColumns[index]!.column));
      valueResults[index] = result;
      if (result.ok || !result.blank) allBlank = false;
    }
    if (allBlank && timeResult.ok) {
      const message = several ? 'no value in any value column; row skipped' : 'no value; row skipped';
      warnings.push(intakeProblem(reference(rowIndex, columns.value), message));
      continue;
    }
    if (!timeResult.ok) {
      const dateHint =
        mapping.timeFormat === 'elapsed' && timeCell instanceof Date
          ? ' (this column holds dates: choose the date-time format)'
          : '';
      report(
        columns.time,
        timeResult.blank ? 'no time given for this value' : `${timeResult.reason}${dateHint}`,
      );
    } else if (typeof timeResult.value === 'number' && timeResult.value < 0) {
      report(columns.time, `time ${timeResult.value} is negative; times are elapsed since the first sample`);
    }
    for (let index = 0; index < valueColumns.length; index += 1) {
      const result = valueResults[index]!;
      if (result.ok || (several && result.blank && !allBlank)) continue;
      if (several && allBlank && index > 0) continue;
      report(valueColumns[index]!.column, result.reason);
    }

    const attribute =
      columns.attribute === undefined ? mapping.valueAttribute : label(columns.attribute, 'attribute name');
    const seriesLabel = label(columns.series, 'batch name');
    const replicateLabel = label(columns.replicate, 'replicate label');

    let temperatureC: number | undefined;
    if (columns.temperature !== undefined) {
      const temperature = parseNumberCell(cell(columns.temperature));
      if (!temperature.ok) {
        report(columns.temperature, temperature.blank ? 'no temperature given' : temperature.reason);
      } else if (temperature.value < lowestTemperature) {
        report(columns.temperature, `${temperature.value} ${temperatureSymbol} is below absolute zero`);
      } else {
        temperatureC = toCelsius(temperature.value, mapping.temperatureUnit);
      }
    }

    if (rowProblems.length > 0 || !timeResult.ok) {
      problems.push(...rowProblems);
      continue;
    }
    for (let index = 0; index < valueColumns.length; index += 1) {
      const result = valueResults[index]!;
      const entry = valueColumns[index]!;
      if (!result.ok) {
        if (result.blank) {
          const named = entry.attribute === undefined ? '' : ` for ${entry.attribute}`;
          warnings.push(intakeProblem(reference(rowIndex, entry.column), `no value${named}; cell skipped`));
        }
        continue;
      }
      const row: DataRow = {
        rowIndex,
        time: timeResult.value,
        value: result.value,
        valueCell: reference(rowIndex, entry.column),
      };
      if (attribute !== undefined) row.attribute = entry.attribute ?? attribute;
      if (result.censored !== undefined) row.censored = result.censored;
      if (seriesLabel !== undefined) row.seriesLabel = seriesLabel;
      if (temperatureC !== undefined) row.temperatureC = temperatureC;
      if (replicateLabel !== undefined) row.replicateLabel = replicateLabel;
      rows.push(row);
      if (entry.nonNegative && result.value < 0) {
        negatives.push({ rowIndex, column: entry.column });
        if (negatives.length <= MAX_NEGATIVE_VALUE_NOTES) {
          warnings.push(
            intakeProblem(
              row.valueCell,
              `value ${result.value} is negative, but an amount in "${entry.unit}" cannot be: check the cell (a typing error, or a result below the quantitation limit written as a number); it is imported as written`,
            ),
          );
        }
      }
    }
  }
  if (negatives.length > MAX_NEGATIVE_VALUE_NOTES) {
    const rest = negatives.slice(MAX_NEGATIVE_VALUE_NOTES);
    const first = rest[0]!;
    const last = rest[rest.length - 1]!;
    const letter = (column: number) => letters.get(column) ?? columnLetter(column);
    const oneColumn = rest.every((entry) => entry.column === first.column);
    warnings.push(
      intakeProblem(
        `${prefix}${letter(first.column)}${first.rowIndex + 1}:${letter(last.column)}${last.rowIndex + 1}`,
        `${rest.length} more negative values in ${oneColumn ? 'this column' : 'these columns'}, each imported as written; check them as above`,
      ),
    );
  }
  return { rows, problems, warnings };
}
