/**
 * Turns an uploaded sheet and a column mapping into degradation series, or lists every problem.
 *
 * Steps: pick the sheet, find the mapped columns (by header text or letter), read every data row
 * (`read-data-rows.ts`), then group rows into series — one per batch and temperature — sorted by
 * time. Rows may come in any order; several rows at one time in one series are replicates and are
 * all kept. Date-times become elapsed time since the earliest sample of their series. The result
 * is all-or-nothing: one unreadable cell anywhere means no series, and the analyst gets the full
 * list of problems with cell references, so a file is fixed in one pass rather than one error at
 * a time. A time column that reads cleanly but does not look like time (`time-column-checks.ts`)
 * gets warnings naming the column and rows, or a problem when every series would sit at one time.
 *
 * Series ids: the batch name; "batch @ 40 °C" when the sheet holds several temperatures;
 * "40 °C" when only a temperature column is mapped; the value column's header otherwise.
 *
 * Never throws; returns `{ ok: false, problems }` instead.
 *
 * Example: sheet rows [['Month', 'Assay'], [3, '98,7'], [0, 100.2]] with
 * `{ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' }` give one series 'Assay' with
 * observations at 0 (100.2) and 3 (98.7) months.
 */
import type { Observation, Series } from '../kinetics/types.ts';
import { columnLetter, sheetPrefix } from './cell-reference.ts';
import type { ColumnMapping } from './column-mapping.ts';
import { elapsedTime } from './elapsed-time.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import { type DataRow, type MappedColumns, readDataRows } from './read-data-rows.ts';
import { headerTexts, resolveColumn } from './resolve-column.ts';
import { isBlankCell, type SheetGrid } from './sheet-grid.ts';
import { timeColumnChecks } from './time-column-checks.ts';

export type IntakeResult =
  | { ok: true; series: Series[]; warnings: IntakeProblem[] }
  | { ok: false; problems: IntakeProblem[]; warnings: IntakeProblem[] };

function formatTemperature(celsius: number): string {
  return `${Number(celsius.toFixed(2))} °C`;
}

function findColumns(
  sheet: SheetGrid,
  mapping: ColumnMapping,
  problems: IntakeProblem[],
): MappedColumns | null {
  const where = sheetPrefix(sheet.name);
  const find = (name: string | undefined, role: string): number | undefined => {
    if (name === undefined) return undefined;
    const resolved = resolveColumn(sheet, mapping.headerRow, name);
    if (resolved.ok) return resolved.index;
    problems.push(intakeProblem(where, `${role} column: ${resolved.message}`));
    return undefined;
  };
  const time = find(mapping.timeColumn, 'time');
  const value = find(mapping.valueColumn, 'value');
  const series = find(mapping.seriesColumn, 'batch');
  const temperature = find(mapping.temperatureColumn, 'temperature');
  const replicate = find(mapping.replicateColumn, 'replicate');
  if (problems.length > 0 || time === undefined || value === undefined) return null;
  if (time === value) {
    problems.push(intakeProblem(where, 'the time and value columns are the same column'));
    return null;
  }
  // Rows are grouped by batch and temperature, so a time taken from either column is one time
  // per series: no rate can be read. Refused with the column named, before anything is read.
  for (const [column, role] of [
    [temperature, 'temperature'],
    [series, 'batch'],
  ] as const) {
    if (column !== time) continue;
    const header = headerTexts(sheet, mapping.headerRow)[time] ?? '';
    const named = `${columnLetter(time)}${header === '' ? '' : ` ("${header}")`}`;
    problems.push(
      intakeProblem(
        where,
        `column ${named} is mapped as both the time and the ${role}, so each series would have a single time: choose the column that holds the time of each pull`,
      ),
    );
    return null;
  }
  return {
    time,
    value,
    ...(series !== undefined ? { series } : {}),
    ...(temperature !== undefined ? { temperature } : {}),
    ...(replicate !== undefined ? { replicate } : {}),
  };
}

function groupRows(rows: DataRow[], fallbackId: string): Map<string, DataRow[]> {
  const temperatures = new Set<number>();
  for (const row of rows) if (row.temperatureC !== undefined) temperatures.add(row.temperatureC);
  // Each temperature is formatted once, not once per row.
  const temperatureTexts = new Map([...temperatures].map((celsius) => [celsius, formatTemperature(celsius)]));
  const groups = new Map<string, DataRow[]>();
  for (const row of rows) {
    const label = row.seriesLabel;
    const temperature = row.temperatureC === undefined ? undefined : temperatureTexts.get(row.temperatureC);
    let id: string;
    if (label !== undefined && temperature !== undefined && temperatures.size > 1) {
      id = `${label} @ ${temperature}`;
    } else if (label !== undefined) id = label;
    else if (temperature !== undefined) id = temperature;
    else id = fallbackId;
    const group = groups.get(id) ?? [];
    group.push(row);
    groups.set(id, group);
  }
  return groups;
}

function buildSeries(id: string, rows: DataRow[], mapping: ColumnMapping, problems: IntakeProblem[]): Series {
  // A loop, not Math.min(...dates): spreading 100,000 arguments overflows the call stack.
  let earliest: number | undefined;
  for (const row of rows) {
    if (!(row.time instanceof Date)) continue;
    const date = row.time.getTime();
    if (earliest === undefined || date < earliest) earliest = date;
  }
  const start = earliest === undefined ? undefined : new Date(earliest);
  // Keys are written in sorted order (here and in the series below) so that the dataset's
  // canonical JSON, which is hashed, is plain JSON.stringify of what is built here.
  const observations: Observation[] = rows.map((row) => ({
    source: { cell: row.valueCell, row: row.rowIndex + 1 },
    time:
      row.time instanceof Date && start
        ? elapsedTime(start, row.time, mapping.timeUnit)
        : (row.time as number),
    value: row.value,
  }));
  const order = observations
    .map((_, index) => index)
    .sort((a, b) => observations[a]!.time - observations[b]!.time);
  if (mapping.replicateColumn !== undefined) {
    const seen = new Map<string, DataRow>();
    for (const row of rows) {
      const key = `${row.time instanceof Date ? row.time.getTime() : row.time}\u0000${row.replicateLabel}`;
      const earlier = seen.get(key);
      if (earlier) {
        problems.push(
          intakeProblem(
            row.valueCell,
            `replicate "${row.replicateLabel}" at this time already given in row ${earlier.rowIndex + 1}`,
          ),
        );
      } else seen.set(key, row);
    }
  }
  const first = rows[0];
  const temperatures = new Set<number | undefined>();
  for (const row of rows) temperatures.add(row.temperatureC);
  const temperatureC =
    first?.temperatureC !== undefined && temperatures.size === 1 ? first.temperatureC : undefined;
  return {
    ...(first?.seriesLabel !== undefined ? { batch: first.seriesLabel } : {}),
    id,
    observations: order.map((index) => observations[index]!),
    ...(temperatureC !== undefined ? { temperatureC } : {}),
    timeUnit: mapping.timeUnit,
    valueUnit: mapping.valueUnit,
  };
}

export function seriesFromGrid(sheets: readonly SheetGrid[], mapping: ColumnMapping): IntakeResult {
  const problems: IntakeProblem[] = [];
  if (sheets.length === 0)
    return { ok: false, problems: [intakeProblem(undefined, 'the file has no sheets')], warnings: [] };
  const sheet =
    mapping.sheet === undefined ? sheets[0] : sheets.find((candidate) => candidate.name === mapping.sheet);
  if (!sheet) {
    const names = sheets.map((candidate) => candidate.name).join(', ');
    return {
      ok: false,
      problems: [intakeProblem(undefined, `no sheet named "${mapping.sheet}" (sheets: ${names})`)],
      warnings: [],
    };
  }
  const where = sheetPrefix(sheet.name);
  if (sheet.rows.every((row) => row.every((cell) => isBlankCell(cell)))) {
    return { ok: false, problems: [intakeProblem(where, 'the sheet is empty')], warnings: [] };
  }
  if (mapping.headerRow > sheet.rows.length) {
    const message = `header row ${mapping.headerRow} is past the last row (${sheet.rows.length})`;
    return { ok: false, problems: [intakeProblem(where, message)], warnings: [] };
  }
  const columns = findColumns(sheet, mapping, problems);
  if (!columns) return { ok: false, problems, warnings: [] };
  const read = readDataRows(sheet, mapping, columns);
  problems.push(...read.problems);
  if (problems.length === 0 && read.rows.length === 0) {
    problems.push(intakeProblem(where, `no data rows below header row ${mapping.headerRow}`));
  }
  const fallbackId = headerTexts(sheet, mapping.headerRow)[columns.value] || sheet.name;
  const groups = groupRows(read.rows, fallbackId);
  const series = [...groups].map(([id, rows]) => buildSeries(id, rows, mapping, problems));
  if (problems.length > 0) return { ok: false, problems, warnings: read.warnings };
  // Whether the time column is plausible as time: its findings come first, they matter most.
  const timeChecks = timeColumnChecks({ sheet, mapping, columns, groups });
  const warnings = [...timeChecks.warnings, ...read.warnings];
  if (timeChecks.problems.length > 0) return { ok: false, problems: timeChecks.problems, warnings };
  return { ok: true, series, warnings };
}
