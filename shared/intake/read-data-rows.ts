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
}

export interface DataRow {
  rowIndex: number;
  /** Elapsed time (elapsed format) or the sampling date (date-time format). */
  time: number | Date;
  value: number;
  valueCell: string;
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
  const mapped = Object.values(columns).filter((column): column is number => column !== undefined);
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
  const nonNegative = valueCannotBeNegative(mapping.valueUnit);
  const negativeRows: number[] = [];
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
    const valueCell = cell(columns.value);
    const timeResult = datetime ? parseDateCell(timeCell) : parseNumberCell(timeCell);
    const valueResult = parseNumberCell(valueCell);
    if (!valueResult.ok && valueResult.blank && timeResult.ok) {
      warnings.push(intakeProblem(reference(rowIndex, columns.value), 'no value; row skipped'));
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
    if (!valueResult.ok) report(columns.value, valueResult.reason);

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

    if (rowProblems.length > 0 || !timeResult.ok || !valueResult.ok) {
      problems.push(...rowProblems);
      continue;
    }
    const row: DataRow = {
      rowIndex,
      time: timeResult.value,
      value: valueResult.value,
      valueCell: reference(rowIndex, columns.value),
    };
    if (seriesLabel !== undefined) row.seriesLabel = seriesLabel;
    if (temperatureC !== undefined) row.temperatureC = temperatureC;
    if (replicateLabel !== undefined) row.replicateLabel = replicateLabel;
    rows.push(row);
    if (nonNegative && valueResult.value < 0) {
      negativeRows.push(rowIndex);
      if (negativeRows.length <= MAX_NEGATIVE_VALUE_NOTES) {
        warnings.push(
          intakeProblem(
            row.valueCell,
            `value ${valueResult.value} is negative, but an amount in "${mapping.valueUnit}" cannot be: check the cell (a typing error, or a result below the quantitation limit written as a number); it is imported as written`,
          ),
        );
      }
    }
  }
  if (negativeRows.length > MAX_NEGATIVE_VALUE_NOTES) {
    const rest = negativeRows.slice(MAX_NEGATIVE_VALUE_NOTES);
    const letter = letters.get(columns.value) ?? columnLetter(columns.value);
    warnings.push(
      intakeProblem(
        `${prefix}${letter}${rest[0]! + 1}:${letter}${rest[rest.length - 1]! + 1}`,
        `${rest.length} more negative values in this column, each imported as written; check them as above`,
      ),
    );
  }
  return { rows, problems, warnings };
}
