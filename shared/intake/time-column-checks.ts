/**
 * Checks that the column mapped as time looks like the time of each pull, once every row has
 * been read: a wrong time column reads without a single bad cell (time = Temperature gives
 * "times" of 25, 40, 50 …) and the analysis then reports nonsense such as a shelf life of 0.00
 * month (issue 12 §6). Each finding names the sheet, column and rows and says what to do.
 *
 * Findings, in this order:
 * 1. The time holds the same number as the temperature column in every row (elapsed format):
 *    each series then sits at one time, so the data are unusable — a problem, not a warning.
 * 2. The time column is headed like a temperature or a relative humidity ("Temperature (°C)",
 *    "Temp", "°C", "% RH"): a warning suggesting the column whose header reads like a time.
 * 3. It has few different values — at most `FEW_TIMES` in the whole column — with on average at
 *    least `MANY_RESULTS_PER_TIME` results at each value of a series: how a condition, batch or
 *    replicate column looks, whereas a pull schedule has one to three results per time (common
 *    practice). A schedule shared by every batch alone is normal (0, 3, 6 months accelerated),
 *    so sharing is reported, not required.
 * 4. In every series with at least `MIN_TIMES_FOR_ORDER` different times the time never rises
 *    from one row to the next and ends lower than it starts: elapsed time falls down the sheet,
 *    as when time and value are swapped (rows listed newest first do it too, which the message
 *    allows for).
 * A series with one time only is reported by the import (`mapSheets`), which needs two times.
 *
 * Never throws; returns problems and warnings.
 *
 * Example: the sample workbook mapped with time = "Temperature (°C)" and batch = "Batch" warns
 * "'Stability data'!C2:C57: the time column C ("Temperature (°C)") is headed like a temperature,
 * not a time …" and that it has only 5 different values with about 6 results at each.
 */
import { columnLetter, sheetPrefix } from './cell-reference.ts';
import type { ColumnMapping } from './column-mapping.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import { type DataRow, type MappedColumns, mappedColumnIndexes } from './read-data-rows.ts';
import { headerTexts } from './resolve-column.ts';
import type { SheetGrid } from './sheet-grid.ts';

export const FEW_TIMES = 5;
export const MANY_RESULTS_PER_TIME = 4;
export const MIN_TIMES_FOR_ORDER = 3;

const KELVIN_OFFSET = 273.15;
const TEMPERATURE_HEADER = /\btemp|temperatur|°\s*[CF]\b|\bkelvin\b|[([]\s*K\s*[)\]]/i;
const HUMIDITY_HEADER = /\bRH\b|humidit|feuchte/i;
const TIME_HEADER = /\b(?:time|month|week|day|hour|date|pull|zeit|monat|tag|mois|jour)|\bh\b/i;

export interface TimeColumnCheckInput {
  sheet: SheetGrid;
  mapping: ColumnMapping;
  columns: MappedColumns;
  /** The rows of each series, in sheet order. */
  groups: ReadonlyMap<string, readonly DataRow[]>;
}

const timeNumber = (time: number | Date) => (time instanceof Date ? time.getTime() : time);
const timeText = (time: number | Date) =>
  time instanceof Date ? time.toISOString().replace(/T00:00:00\.000Z$/, '') : String(time);
const same = (a: number, b: number) => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));

export function timeColumnChecks(input: TimeColumnCheckInput): {
  problems: IntakeProblem[];
  warnings: IntakeProblem[];
} {
  const { sheet, mapping, columns, groups } = input;
  const rows = [...groups.values()].flat();
  if (rows.length === 0) return { problems: [], warnings: [] };
  const headers = headerTexts(sheet, mapping.headerRow);
  const describe = (column: number) => {
    const header = headers[column] ?? '';
    return header === '' ? columnLetter(column) : `${columnLetter(column)} ("${header}")`;
  };
  let first = rows[0]!.rowIndex;
  let last = first;
  for (const row of rows) {
    if (row.rowIndex < first) first = row.rowIndex;
    if (row.rowIndex > last) last = row.rowIndex;
  }
  const letter = columnLetter(columns.time);
  const where = `${sheetPrefix(sheet.name)}!${letter}${first + 1}${last > first ? `:${letter}${last + 1}` : ''}`;
  const timeColumn = `the time column ${describe(columns.time)}`;
  const suggestion = timeLikeColumn(headers, columns);
  const chooseTime = `choose the column that holds the time of each pull${suggestion === null ? '' : ` (perhaps ${describe(suggestion)})`}`;

  if (columns.temperature !== undefined && mapping.timeFormat === 'elapsed' && rows.length > 1) {
    const offset = mapping.temperatureUnit === 'K' ? KELVIN_OFFSET : 0;
    const equal = rows.every(
      (row) =>
        row.temperatureC !== undefined &&
        typeof row.time === 'number' &&
        same(row.time, row.temperatureC + offset),
    );
    if (equal) {
      const message = `${timeColumn} holds the same number as the temperature column ${describe(columns.temperature)} in every row, so each series has a single time and no rate can be read: ${chooseTime}`;
      return { problems: [intakeProblem(where, message)], warnings: [] };
    }
  }

  const warnings: IntakeProblem[] = [];
  const header = headers[columns.time] ?? '';
  const condition = TEMPERATURE_HEADER.test(header)
    ? 'a temperature'
    : HUMIDITY_HEADER.test(header)
      ? 'a relative humidity'
      : null;
  if (condition !== null) {
    const remap = condition === 'a temperature' ? ' map it as the temperature column and' : '';
    warnings.push(
      intakeProblem(
        where,
        `${timeColumn} is headed like ${condition}, not a time: if it holds the storage condition,${remap} ${chooseTime}`,
      ),
    );
  }

  const distinct = new Map<number, number | Date>();
  let pairs = 0;
  const perSeries: Set<number>[] = [];
  for (const group of groups.values()) {
    const times = new Set<number>();
    for (const row of group) {
      const value = timeNumber(row.time);
      times.add(value);
      if (!distinct.has(value)) distinct.set(value, row.time);
    }
    pairs += times.size;
    perSeries.push(times);
  }
  const perTime = rows.length / pairs;
  if (distinct.size >= 2 && distinct.size <= FEW_TIMES && perTime >= MANY_RESULTS_PER_TIME) {
    const values = [...distinct]
      .sort(([a], [b]) => a - b)
      .map(([, time]) => timeText(time))
      .join(', ');
    const shared =
      groups.size > 1 && perSeries.every((times) => times.size === distinct.size)
        ? ', the same values in every series'
        : '';
    warnings.push(
      intakeProblem(
        where,
        `${timeColumn} has only ${distinct.size} different values (${values}) with ${Number(perTime.toFixed(1))} results at each value of a series on average${shared}: that is how a storage condition, batch or replicate column looks, not the time of each pull. Check the mapping; if these really are few pulls with many replicates, import as it is`,
      ),
    );
  }

  const falling = fallingSeries(groups);
  if (falling !== null) {
    const [id, start, end] = falling;
    warnings.push(
      intakeProblem(
        where,
        `in every series the time in ${describe(columns.time)} falls down the rows (${id}: ${timeText(start.time)} in row ${start.rowIndex + 1} to ${timeText(end.time)} in row ${end.rowIndex + 1}), but elapsed time rises from one pull to the next: check that the time and value columns are not swapped; if the rows are simply listed newest first, import as it is`,
      ),
    );
  }
  return { problems: [], warnings };
}

/** A column other than the mapped ones whose header reads like a time, if any. */
function timeLikeColumn(headers: readonly string[], columns: MappedColumns): number | null {
  const mapped = new Set(mappedColumnIndexes(columns));
  const index = headers.findIndex(
    (header, column) => !mapped.has(column) && TIME_HEADER.test(header) && !TEMPERATURE_HEADER.test(header),
  );
  return index < 0 ? null : index;
}

/**
 * When every series with enough different times has its time falling down the rows, the first
 * such series with its first and last row; null otherwise (or when no series has enough times).
 */
function fallingSeries(groups: ReadonlyMap<string, readonly DataRow[]>): [string, DataRow, DataRow] | null {
  let example: [string, DataRow, DataRow] | null = null;
  for (const [id, group] of groups) {
    if (new Set(group.map((row) => timeNumber(row.time))).size < MIN_TIMES_FOR_ORDER) continue;
    const ordered = [...group].sort((a, b) => a.rowIndex - b.rowIndex);
    for (let index = 1; index < ordered.length; index += 1) {
      if (timeNumber(ordered[index]!.time) > timeNumber(ordered[index - 1]!.time)) return null;
    }
    example ??= [id, ordered[0]!, ordered[ordered.length - 1]!];
  }
  return example;
}
