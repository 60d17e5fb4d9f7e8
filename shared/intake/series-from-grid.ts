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
 * Attributes (issue 15 §1): when the mapping names them (`valueAttribute`, `moreValueColumns` or
 * `attributeColumn`, `column-mapping.ts`), rows are grouped by attribute as well and every series
 * carries its `attribute`. When the dataset holds more than one attribute, each id is prefixed
 * with it ("Impurity B · VZ-001 @ 40 °C"; the attribute alone when there is neither batch nor
 * temperature), so ids stay unique; a dataset of one attribute keeps the ids above. Each series'
 * unit is its column's, else the mapping's `valueUnit`. Given the study's attribute names
 * (`options.attributes`), every name must be one of them and the study's spelling is stored;
 * refusals are returned in `attributeProblems` as well (the server answers them with a 400).
 * Series come in the study's attribute order when it is known, else in the mapping's or the
 * sheet's order.
 *
 * Never throws; returns `{ ok: false, problems }` instead.
 *
 * Example: sheet rows [['Month', 'Assay'], [3, '98,7'], [0, 100.2]] with
 * `{ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' }` give one series 'Assay' with
 * observations at 0 (100.2) and 3 (98.7) months.
 */
import type { Observation, Series } from '../kinetics/types.ts';
import { attributeNamer, findAttributeColumns, mappingAttributeProblems } from './attribute-columns.ts';
import { columnLetter, sheetPrefix } from './cell-reference.ts';
import { type ColumnMapping, mappingNamesAttributes } from './column-mapping.ts';
import { elapsedTime } from './elapsed-time.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import { type DataRow, type MappedColumns, readDataRows } from './read-data-rows.ts';
import { headerTexts, resolveColumn } from './resolve-column.ts';
import { isBlankCell, type SheetGrid } from './sheet-grid.ts';
import { timeColumnChecks } from './time-column-checks.ts';

export type IntakeResult =
  | { ok: true; series: Series[]; warnings: IntakeProblem[] }
  | {
      ok: false;
      problems: IntakeProblem[];
      warnings: IntakeProblem[];
      /** Attribute names that are not the study's (also in `problems`); only with `attributes`. */
      attributeProblems?: IntakeProblem[];
    };

export interface IntakeOptions {
  /** The study's attribute names, in its order: names must be among them, spelled as there. */
  attributes?: readonly string[];
  /**
   * The unit of each of `attributes` (same order). In the long layout one value column holds
   * every attribute, so each series takes its attribute's unit from the study, not the mapping's
   * single `valueUnit`.
   */
  attributeUnits?: readonly string[];
}

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
  const found: MappedColumns = {
    time,
    value,
    ...(series !== undefined ? { series } : {}),
    ...(temperature !== undefined ? { temperature } : {}),
    ...(replicate !== undefined ? { replicate } : {}),
  };
  return mappingNamesAttributes(mapping) ? findAttributeColumns(sheet, mapping, found, problems) : found;
}

function groupRows(
  rows: DataRow[],
  fallbackId: string,
  temperatures: ReadonlySet<number>,
  prefix: string,
): Map<string, DataRow[]> {
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
    if (prefix !== '' && id !== prefix) id = `${prefix} · ${id}`;
    const group = groups.get(id) ?? [];
    group.push(row);
    groups.set(id, group);
  }
  return groups;
}

/** The rows of each attribute (one entry, keyed '', when the mapping names none), in order. */
function rowsByAttribute(rows: DataRow[], order: readonly string[]): Map<string, DataRow[]> {
  // A mapping that names no attribute: every row is the one attribute's, as they are.
  if (order.length === 0) return new Map([['', rows]]);
  const byAttribute = new Map<string, DataRow[]>(order.map((name) => [name, []]));
  for (const row of rows) {
    const key = row.attribute ?? '';
    const list = byAttribute.get(key);
    if (list) list.push(row);
    else byAttribute.set(key, [row]);
  }
  for (const [name, list] of byAttribute) if (list.length === 0) byAttribute.delete(name);
  return byAttribute;
}

function buildSeries(
  id: string,
  rows: DataRow[],
  mapping: ColumnMapping,
  problems: IntakeProblem[],
  attribute: { name: string; unit: string } | undefined,
): Series {
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
  // Observations with a censored cell are made separately: a literal with a conditional spread
  // is several times slower to create, and 100,000 of the others are made here.
  const timeOf = (row: DataRow) =>
    row.time instanceof Date && start ? elapsedTime(start, row.time, mapping.timeUnit) : (row.time as number);
  const observations: Observation[] = rows.map((row) =>
    row.censored === undefined
      ? {
          source: { cell: row.valueCell, row: row.rowIndex + 1 },
          time:
            row.time instanceof Date && start
              ? elapsedTime(start, row.time, mapping.timeUnit)
              : (row.time as number),
          value: row.value,
        }
      : {
          censored: row.censored,
          source: { cell: row.valueCell, row: row.rowIndex + 1 },
          time: timeOf(row),
          value: row.value,
        },
  );
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
    ...(attribute !== undefined ? { attribute: attribute.name } : {}),
    ...(first?.seriesLabel !== undefined ? { batch: first.seriesLabel } : {}),
    id,
    observations: order.map((index) => observations[index]!),
    ...(temperatureC !== undefined ? { temperatureC } : {}),
    timeUnit: mapping.timeUnit,
    valueUnit: attribute?.unit ?? mapping.valueUnit,
  };
}

export function seriesFromGrid(
  sheets: readonly SheetGrid[],
  mapping: ColumnMapping,
  options: IntakeOptions = {},
): IntakeResult {
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
  if (options.attributes !== undefined) {
    const refused = mappingAttributeProblems(mapping, options.attributes);
    if (refused.length > 0) return { ok: false, problems: refused, warnings: [], attributeProblems: refused };
  }
  const columns = findColumns(sheet, mapping, problems);
  if (!columns) return { ok: false, problems, warnings: [] };
  const read = readDataRows(sheet, mapping, columns);
  problems.push(...read.problems);
  if (problems.length === 0 && read.rows.length === 0) {
    problems.push(intakeProblem(where, `no data rows below header row ${mapping.headerRow}`));
  }
  const named = nameAttributes(sheet, mapping, columns, read.rows, options);
  if (named.problems.length > 0) {
    return {
      ok: false,
      problems: [...named.problems, ...problems],
      warnings: read.warnings,
      attributeProblems: named.problems,
    };
  }
  const headers = headerTexts(sheet, mapping.headerRow);
  const temperatures = new Set<number>();
  for (const row of named.rows) if (row.temperatureC !== undefined) temperatures.add(row.temperatureC);
  const byAttribute = rowsByAttribute(named.rows, named.order);
  const several = byAttribute.size > 1;
  const groups = new Map<string, DataRow[]>();
  const attributeOf = new Map<string, { name: string; unit: string }>();
  for (const [name, rows] of byAttribute) {
    const column = named.columnOf.get(name) ?? columns.value;
    const fallbackId = several ? name : headers[column] || sheet.name;
    for (const [id, group] of groupRows(rows, fallbackId, temperatures, several ? name : '')) {
      groups.set(id, group);
      if (name !== '') attributeOf.set(id, { name, unit: named.unitOf.get(name) ?? mapping.valueUnit });
    }
  }
  const series = [...groups].map(([id, rows]) =>
    buildSeries(id, rows, mapping, problems, attributeOf.get(id)),
  );
  if (problems.length > 0) return { ok: false, problems, warnings: read.warnings };
  // Whether the time column is plausible as time: its findings come first, they matter most.
  const timeChecks = timeColumnChecks({ sheet, mapping, columns, groups });
  const warnings = [...timeChecks.warnings, ...read.warnings];
  if (timeChecks.problems.length > 0) return { ok: false, problems: timeChecks.problems, warnings };
  return { ok: true, series, warnings };
}

/**
 * The rows with each attribute spelled one way (the study's, when known), the attribute order,
 * each attribute's column and unit, and the names the study does not have.
 */
function nameAttributes(
  sheet: SheetGrid,
  mapping: ColumnMapping,
  columns: MappedColumns,
  rows: DataRow[],
  options: IntakeOptions,
): {
  rows: DataRow[];
  order: string[];
  columnOf: Map<string, number>;
  unitOf: Map<string, string>;
  problems: IntakeProblem[];
} {
  const columnOf = new Map<string, number>();
  const unitOf = new Map<string, string>();
  if (!mappingNamesAttributes(mapping)) return { rows, order: [], columnOf, unitOf, problems: [] };
  const namer = attributeNamer(options.attributes);
  const prefix = `${sheetPrefix(sheet.name)}!`;
  const attributeLetter = columns.attribute === undefined ? '' : columnLetter(columns.attribute);
  const order: string[] = [];
  if (columns.attribute === undefined) {
    // Wide layout: the mapping's names, already checked against the study's when it is known.
    const wide = [
      { attribute: mapping.valueAttribute!, column: columns.value, unit: mapping.valueUnit },
      ...(columns.moreValues ?? []),
    ];
    for (const entry of wide) {
      const name = namer.name(entry.attribute, '') ?? entry.attribute;
      order.push(name);
      columnOf.set(name, entry.column);
      unitOf.set(name, entry.unit);
    }
  }
  const named: DataRow[] = [];
  for (const row of rows) {
    const cell = `${prefix}${attributeLetter}${row.rowIndex + 1}`;
    const name = namer.name(row.attribute ?? '', cell);
    if (name === undefined) continue;
    if (columns.attribute !== undefined && !columnOf.has(name)) {
      order.push(name);
      columnOf.set(name, columns.value);
      const studyUnit = options.attributeUnits?.[options.attributes?.indexOf(name) ?? -1];
      if (studyUnit !== undefined) unitOf.set(name, studyUnit);
    }
    named.push(name === row.attribute ? row : { ...row, attribute: name });
  }
  const problems = namer.problems();
  if (options.attributes !== undefined) {
    const rank = (name: string) => options.attributes!.indexOf(name);
    order.sort((a, b) => rank(a) - rank(b));
  }
  return { rows: named, order, columnOf, unitOf, problems };
}
