/**
 * `npm run --silent mkt -- [options] FILE`: assesses a temperature log (CSV or XLSX) from the
 * command line — mean kinetic temperature over the whole log and rolling windows, extremes, time
 * outside the labelled range, excursions and gaps — and prints text, or one JSON document with
 * `--json` (docs/mkt-cli.md).
 *
 * Exit codes: 0 when the log was assessed; 2 for unusable input (options, file, cells), with
 * every problem on standard error, each naming its cell.
 */
import path from 'node:path';
import { temperatureLogFromGrid } from '../../shared/intake/temperature-log-from-grid.ts';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import { assessTemperatureLog } from '../../shared/kinetics/temperature/temperature-log.ts';
import { temperatureLogDocument } from '../../shared/kinetics/temperature/temperature-log-document.ts';
import { temperatureLogOptions } from '../../shared/kinetics/temperature/temperature-log-settings.ts';
import { temperatureLogText } from '../../shared/kinetics/temperature/temperature-log-text.ts';
import { loadSheetsOrFail } from './load-sheets.ts';
import { MKT_USAGE, type MktOptions, parseMktArguments } from './mkt-arguments.ts';

const EXIT_BAD_INPUT = 2;

function fail(messages: string[], code = EXIT_BAD_INPUT): never {
  for (const message of messages) process.stderr.write(`mkt: ${message}\n`);
  process.exit(code);
}

async function main(options: MktOptions): Promise<number> {
  const sheets = await loadSheetsOrFail(options.file, fail);
  const intake = temperatureLogFromGrid(sheets, options.mapping);
  if (!intake.ok) fail(intake.problems.map((problem) => problem.text));
  const assessment = assessTemperatureLog(
    intake.readings,
    temperatureLogOptions(options.settings, intake.timeUnit),
  );
  const document = temperatureLogDocument(assessment, {
    file: path.basename(options.file),
    sheet: intake.sheet,
    timeUnit: intake.timeUnit,
    startAt: intake.startAt,
    rangeC:
      options.settings.rangeMinC === undefined && options.settings.rangeMaxC === undefined
        ? null
        : { minC: options.settings.rangeMinC, maxC: options.settings.rangeMaxC },
  });
  process.stdout.write(
    options.json ? `${JSON.stringify(document, null, 2)}\n` : temperatureLogText(document),
  );
  return 0;
}

const parsed = parseMktArguments(process.argv.slice(2));
if (!parsed.ok) fail([parsed.message, 'Run with --help for the options.']);
if ('help' in parsed) {
  process.stdout.write(`${MKT_USAGE}\n`);
  process.exit(0);
}
main(parsed.options).then(
  (code) => process.exit(code),
  (error: unknown) => {
    const message =
      error instanceof KineticsError
        ? error.message
        : `the assessment stopped on an internal error (${error instanceof Error ? error.message : String(error)}); nothing was computed. Please report it with the log file and the options used.`;
    fail([message], EXIT_BAD_INPUT);
  },
);
