/**
 * `npm run --silent fit -- [options] FILE`: fits degradation kinetics to a CSV or XLSX file from
 * the command line and prints a readable report, or one JSON document with `--json`
 * (docs/fit-cli.md).
 *
 * Steps: read the options; read the file into cell grids; take units the options leave out from
 * the column headers ("Time (h)", "Assay (%)"); read the series with the column mapping (every
 * problem listed with its cell); analyse the data set; print.
 *
 * Exit codes: 0 when at least one series was analysed (series that could not be are reported in
 * the output); 1 when no series could be analysed; 2 for unusable input (options, file, cells),
 * with every problem on standard error.
 */
import path from 'node:path';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { headerTexts, resolveColumn } from '../../shared/intake/resolve-column.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import type { SheetGrid } from '../../shared/intake/sheet-grid.ts';
import {
  temperatureUnitFromHeader,
  timeUnitFromHeader,
  valueUnitFromHeader,
} from '../../shared/intake/unit-from-header.ts';
import { analyseDataset } from '../../shared/kinetics/analyse-dataset.ts';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import { FIT_USAGE, type FitOptions, parseFitArguments } from './fit-arguments.ts';
import { fitDocument, fitDocumentStreamed } from './fit-document.ts';
import { jsonChunks } from './fit-json-output.ts';
import { fitReport } from './fit-report.ts';
import { loadSheetsOrFail } from './load-sheets.ts';

const EXIT_NOTHING_COMPUTED = 1;
const EXIT_BAD_INPUT = 2;

function fail(messages: string[], code = EXIT_BAD_INPUT): never {
  for (const message of messages) process.stderr.write(`fit: ${message}\n`);
  process.exit(code);
}

/**
 * Writes to standard output and resolves once the text is handed to the system: `process.exit`
 * right after a large write to a pipe would otherwise cut the document short.
 */
function writeOut(text: string): Promise<void> {
  return new Promise((resolve, reject) =>
    process.stdout.write(text, (error) => (error ? reject(error) : resolve())),
  );
}

/** The JSON document and a line break, written in pieces of about `JSON_PIECE` characters. */
const JSON_PIECE = 1 << 20;

async function writeJson(document: Record<string, unknown>): Promise<void> {
  let piece = '';
  for (const chunk of jsonChunks(document)) {
    piece += chunk;
    if (piece.length >= JSON_PIECE) {
      await writeOut(piece);
      piece = '';
    }
  }
  await writeOut(`${piece}\n`);
}

function headerOf(sheet: SheetGrid, headerRow: number, column: string): string {
  const resolved = resolveColumn(sheet, headerRow, column);
  return resolved.ok ? (headerTexts(sheet, headerRow)[resolved.index] ?? '') : '';
}

async function main(options: FitOptions): Promise<number> {
  const sheets = await loadSheetsOrFail(options.file, fail);
  const sheet =
    options.sheet === undefined ? sheets[0] : sheets.find((candidate) => candidate.name === options.sheet);
  const timeHeader = sheet ? headerOf(sheet, options.headerRow, options.time) : '';
  const valueHeader = sheet ? headerOf(sheet, options.headerRow, options.value) : '';
  const temperatureHeader =
    sheet && options.temperature ? headerOf(sheet, options.headerRow, options.temperature) : '';
  const timeUnit = options.timeUnit ?? timeUnitFromHeader(timeHeader);
  if (sheet && timeUnit === null) {
    fail([
      `the time unit is not stated in the header "${timeHeader}"; give it with --time-unit (s, min, h, d, week, month, year).`,
    ]);
  }
  const mapping = columnMappingSchema.safeParse({
    sheet: sheet?.name ?? options.sheet,
    headerRow: options.headerRow,
    timeColumn: options.time,
    timeFormat: options.timeFormat,
    timeUnit: timeUnit ?? 'month',
    valueColumn: options.value,
    valueUnit: options.valueUnit ?? valueUnitFromHeader(valueHeader) ?? '%',
    seriesColumn: options.series,
    temperatureColumn: options.temperature,
    temperatureUnit: options.temperatureUnit ?? temperatureUnitFromHeader(temperatureHeader) ?? 'C',
  });
  if (!mapping.success)
    fail(mapping.error.issues.map((issue) => `${issue.path.join('.')}: ${issue.message}`));
  const intake = seriesFromGrid(sheets, mapping.data);
  for (const warning of intake.warnings) process.stderr.write(`fit: warning: ${warning.text}\n`);
  if (!intake.ok) fail(intake.problems.map((problem) => problem.text));

  const analysis = analyseDataset(intake.series, {
    confidenceLevel: options.confidence,
    errorModel: options.errorModel,
    ...(options.order === undefined ? {} : { order: options.order }),
    ...(options.workingOrder === undefined ? {} : { workingOrder: options.workingOrder }),
    ...(options.lowerLimit === undefined ? {} : { lowerLimit: options.lowerLimit }),
    ...(options.upperLimit === undefined ? {} : { upperLimit: options.upperLimit }),
    ...(options.storageTemperature === undefined ? {} : { storageTemperatureC: options.storageTemperature }),
    q1e: options.q1e,
  });
  const context = {
    file: path.basename(options.file),
    sheet: mapping.data.sheet ?? sheets[0]?.name ?? '',
    timeUnit: mapping.data.timeUnit,
    valueUnit: mapping.data.valueUnit,
    temperatureColumnGiven: options.temperature !== undefined,
    intakeWarnings: intake.warnings.map((warning) => warning.text),
  };
  if (options.json) await writeJson(fitDocumentStreamed(analysis, context));
  else await writeOut(fitReport(fitDocument(analysis, context)));
  const analysed = analysis.series.filter((result) => result.analysis !== null).length;
  if (analysed === 0) {
    process.stderr.write('fit: no series could be analysed; see the reasons above.\n');
    return EXIT_NOTHING_COMPUTED;
  }
  return 0;
}

const parsed = parseFitArguments(process.argv.slice(2));
if (!parsed.ok) fail([parsed.message, 'Run with --help for the options.']);
if ('help' in parsed) {
  process.stdout.write(`${FIT_USAGE}\n`);
  process.exit(0);
}
main(parsed.options).then(
  (code) => process.exit(code),
  (error: unknown) => {
    // Never a stack trace for the user: a plain sentence, and what to do (issue 12 §6).
    const message =
      error instanceof KineticsError
        ? error.message
        : `the analysis stopped on an internal error (${error instanceof Error ? error.message : String(error)}); nothing was computed. Please report it with the data file and the options used.`;
    fail([message], EXIT_NOTHING_COMPUTED);
  },
);
