/**
 * Reads a data-logger file (time and temperature per row) out of a sheet, for the temperature-log
 * assessment: one zod schema for the columns and settings, used by the `mkt` command and the
 * upload form, and one reader that names the cell of every problem.
 *
 * Time is either elapsed time in `timeUnit` or a date-time per row (`timeFormat: 'datetime'`;
 * 'auto' takes date-times when the first time cell is a date or ISO date text). Date-times become
 * elapsed `timeUnit`s since the first reading (hours when no unit is given). Rows blank in both
 * columns are skipped (loggers often end with empty rows); a row with only one of the two is a
 * problem at the empty cell. Times must increase strictly, as a logger writes them; a time that
 * goes back is a problem naming both rows, never silently sorted.
 *
 * Example: a sheet with headers "Recorded at", "Temperature (°C)" and the rows
 * "2026-06-01 08:00", 21.4 and "2026-06-01 08:15", 21.9 gives readings
 * `[{ time: 0, temperatureC: 21.4 }, { time: 0.25, temperatureC: 21.9 }]` in hours.
 */
import { z } from 'zod';
import { type TemperatureUnit, TIME_UNITS, type TimeUnit, toCelsius } from '../kinetics/units.ts';
import { cellReference, sheetPrefix } from './cell-reference.ts';
import { elapsedTime } from './elapsed-time.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import { parseDateCell } from './parse-date-cell.ts';
import { parseNumberCell } from './parse-number-cell.ts';
import { headerTexts, resolveColumn } from './resolve-column.ts';
import { type GridCell, isBlankCell, type SheetGrid } from './sheet-grid.ts';
import { temperatureUnitFromHeader, timeUnitFromHeader } from './unit-from-header.ts';

const columnName = z.string().trim().min(1, 'Name a column by its header text or its letter.');

export const temperatureLogMappingSchema = z.object({
  /** Sheet name; the first sheet when omitted. */
  sheet: z.string().min(1).optional(),
  /** 1-based row of the column headers; 0 when there is none. Data start on the next row. */
  headerRow: z.int().min(0).default(1),
  timeColumn: columnName,
  timeFormat: z.enum(['auto', 'elapsed', 'datetime']).default('auto'),
  /** Unit of elapsed times, or the unit date-times are converted to; from the header when omitted. */
  timeUnit: z.enum(TIME_UNITS).optional(),
  temperatureColumn: columnName,
  /** From the header ("Temperature (K)") when omitted, else °C. */
  temperatureUnit: z.enum(['C', 'K']).optional(),
});

export type TemperatureLogMappingInput = z.input<typeof temperatureLogMappingSchema>;
export type TemperatureLogMapping = z.output<typeof temperatureLogMappingSchema>;

/** Most problems listed one by one; the rest are counted. */
export const MAX_LISTED_LOG_PROBLEMS = 50;

export interface TemperatureLogIntake {
  ok: true;
  sheet: string;
  readings: { time: number; temperatureC: number }[];
  /** Spreadsheet row (1-based) of each reading, for messages. */
  rows: number[];
  timeUnit: TimeUnit;
  temperatureUnit: TemperatureUnit;
  /** Date-time of the first reading when the log holds date-times; null for elapsed times. */
  startAt: Date | null;
  timeHeader: string;
  temperatureHeader: string;
}

export type TemperatureLogIntakeResult = TemperatureLogIntake | { ok: false; problems: IntakeProblem[] };

function looksLikeDate(cell: GridCell | undefined): boolean {
  if (cell instanceof Date) return true;
  return typeof cell === 'string' && /^\d{4}-\d{2}-\d{2}|^\d{1,2}\.\d{1,2}\.\d{4}/.test(cell.trim());
}

export function temperatureLogFromGrid(
  sheets: readonly SheetGrid[],
  mapping: TemperatureLogMapping,
): TemperatureLogIntakeResult {
  const sheet = mapping.sheet === undefined ? sheets[0] : sheets.find((s) => s.name === mapping.sheet);
  if (!sheet) {
    const names = sheets.map((s) => `"${s.name}"`).join(', ');
    return {
      ok: false,
      problems: [
        intakeProblem(
          undefined,
          mapping.sheet === undefined
            ? 'The file holds no sheet.'
            : `There is no sheet "${mapping.sheet}"; the file has ${names || 'none'}.`,
        ),
      ],
    };
  }
  const problems: IntakeProblem[] = [];
  const where = sheetPrefix(sheet.name);
  const timeColumn = resolveColumn(sheet, mapping.headerRow, mapping.timeColumn);
  const temperatureColumn = resolveColumn(sheet, mapping.headerRow, mapping.temperatureColumn);
  if (!timeColumn.ok) problems.push(intakeProblem(where, `time column: ${timeColumn.message}`));
  if (!temperatureColumn.ok)
    problems.push(intakeProblem(where, `temperature column: ${temperatureColumn.message}`));
  if (!timeColumn.ok || !temperatureColumn.ok) return { ok: false, problems };
  const headers = headerTexts(sheet, mapping.headerRow);
  const timeHeader = headers[timeColumn.index] ?? '';
  const temperatureHeader = headers[temperatureColumn.index] ?? '';
  const temperatureUnit = mapping.temperatureUnit ?? temperatureUnitFromHeader(temperatureHeader) ?? 'C';

  const firstDataRow = mapping.headerRow;
  const dataRows = sheet.rows
    .map((row, index) => ({ row, index }))
    .slice(firstDataRow)
    .filter(({ row }) => !(isBlankCell(row[timeColumn.index]) && isBlankCell(row[temperatureColumn.index])));
  const datetime =
    mapping.timeFormat === 'datetime' ||
    (mapping.timeFormat === 'auto' && looksLikeDate(dataRows[0]?.row[timeColumn.index]));
  const timeUnit = mapping.timeUnit ?? timeUnitFromHeader(timeHeader) ?? (datetime ? 'h' : null);
  if (timeUnit === null) {
    return {
      ok: false,
      problems: [
        intakeProblem(
          where,
          `the time unit is not stated in the header "${timeHeader}"; state it (s, min, h, d, week, month, year).`,
        ),
      ],
    };
  }
  if (datetime && (timeUnit === 'month' || timeUnit === 'year')) {
    return {
      ok: false,
      problems: [
        intakeProblem(
          where,
          `a log of date-times is measured in fixed units (s, min, h, d, week), not in ${timeUnit}s; choose one of those.`,
        ),
      ],
    };
  }
  if (dataRows.length < 2) {
    return {
      ok: false,
      problems: [intakeProblem(where, 'a temperature log needs at least two readings below the header row.')],
    };
  }

  let extra = 0;
  const report = (rowIndex: number, column: number, message: string) => {
    if (problems.length < MAX_LISTED_LOG_PROBLEMS)
      problems.push(intakeProblem(cellReference(sheet.name, rowIndex, column), message));
    else extra += 1;
  };
  const readings: { time: number; temperatureC: number }[] = [];
  const rows: number[] = [];
  let startAt: Date | null = null;
  let previous: { time: number; rowIndex: number } | null = null;
  for (const { row, index } of dataRows) {
    const timeCell = row[timeColumn.index];
    let time: number | null = null;
    if (datetime) {
      const parsed = parseDateCell(timeCell);
      if (!parsed.ok) report(index, timeColumn.index, `date-time ${parsed.reason}`);
      else {
        if (startAt === null) startAt = parsed.value;
        time =
          parsed.value.getTime() >= startAt.getTime()
            ? elapsedTime(startAt, parsed.value, timeUnit)
            : -elapsedTime(parsed.value, startAt, timeUnit);
      }
    } else {
      const parsed = parseNumberCell(timeCell);
      if (!parsed.ok) report(index, timeColumn.index, `time ${parsed.reason}`);
      else time = parsed.value;
    }
    const temperatureCell = parseNumberCell(row[temperatureColumn.index]);
    let temperatureC: number | null = null;
    if (!temperatureCell.ok) report(index, temperatureColumn.index, `temperature ${temperatureCell.reason}`);
    else {
      try {
        temperatureC = toCelsius(temperatureCell.value, temperatureUnit);
      } catch (error) {
        report(index, temperatureColumn.index, (error as Error).message);
      }
    }
    if (time === null) continue;
    if (previous !== null && !(time > previous.time)) {
      report(
        index,
        timeColumn.index,
        `this time is not after the one in row ${previous.rowIndex + 1}; a log must run forward in time without repeated times (sort it, or remove the repeated reading).`,
      );
    }
    previous = { time, rowIndex: index };
    if (temperatureC !== null) {
      readings.push({ time, temperatureC });
      rows.push(index + 1);
    }
  }
  if (extra > 0) problems.push(intakeProblem(where, `and ${extra} more problems of the same kinds.`));
  if (problems.length > 0) return { ok: false, problems };
  return {
    ok: true,
    sheet: sheet.name,
    readings,
    rows,
    timeUnit,
    temperatureUnit,
    startAt,
    timeHeader,
    temperatureHeader,
  };
}
