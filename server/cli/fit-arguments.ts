/**
 * The options of the `fit` command, read with node:util `parseArgs` and checked into one record.
 *
 * Numbers may be written with a decimal comma ("--lower-limit 90,0"). Units are read with the
 * engine's own spellings (`parseTimeUnit`). Anything wrong — an unknown option, a missing file,
 * a limit that is not a number — gives `{ ok: false, message }` naming the option.
 *
 * Example: `parseFitArguments(['--time', 'Month', '--value', 'Assay', 'data.csv'])` gives
 * `{ ok: true, options: { file: 'data.csv', time: 'Month', value: 'Assay', json: false, ... } }`.
 */
import { parseArgs } from 'node:util';
import { parseNumberCell } from '../../shared/intake/parse-number-cell.ts';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import type { IntegerOrder } from '../../shared/kinetics/types.ts';
import {
  parseTimeUnit,
  type TemperatureUnit,
  type TimeUnit,
  tryParseTemperatureUnit,
} from '../../shared/kinetics/units.ts';

export interface FitOptions {
  file: string;
  time: string;
  value: string;
  series?: string;
  temperature?: string;
  temperatureUnit?: TemperatureUnit;
  timeUnit?: TimeUnit;
  timeFormat: 'elapsed' | 'datetime';
  valueUnit?: string;
  sheet?: string;
  headerRow: number;
  lowerLimit?: number;
  upperLimit?: number;
  order?: IntegerOrder;
  errorModel: 'auto' | 'constant' | 'proportional';
  confidence: number;
  storageTemperature?: number;
  json: boolean;
}

export type FitArguments =
  | { ok: true; options: FitOptions }
  | { ok: true; help: true }
  | { ok: false; message: string };

export const FIT_USAGE = `Usage: npm run --silent fit -- [options] FILE

Fits zero-, first- and second-order rate laws to each series in a CSV or XLSX file.

Required:
  --time COL               column of times (header text or letter)
  --value COL              column of measured values
Optional:
  --series COL             batch column: one series per batch
  --temperature COL        storage temperature column (enables Arrhenius)
  --temperature-unit C|K   unit of the temperature column (default: from header, else C)
  --time-unit U            s, min, h, d, week, month, year (default: from header)
  --dates                  the time column holds sampling dates; elapsed time in --time-unit
  --value-unit U           unit of the values (default: from header, else %)
  --sheet NAME             worksheet (default: the first)
  --header-row N           row of the headers, 1-based; 0 = none (default 1)
  --lower-limit X          lower specification limit (shelf life, time to limit)
  --upper-limit X          upper specification limit
  --order 0|1|2            fix the reaction order instead of choosing it
  --error-model M          auto, constant or proportional (default auto)
  --confidence P           confidence level, e.g. 0.95 (default 0.95)
  --storage-temperature T  predict k at this temperature (°C) from the Arrhenius fit
  --json                   print one JSON document instead of tables
  --help                   show this text`;

function number(name: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const parsed = parseNumberCell(text);
  if (!parsed.ok) throw new KineticsError('invalid-input', `--${name}: "${text}" is not a number.`);
  return parsed.value;
}

export function parseFitArguments(argv: readonly string[]): FitArguments {
  try {
    const { values, positionals } = parseArgs({
      args: [...argv],
      allowPositionals: true,
      strict: true,
      options: {
        time: { type: 'string' },
        value: { type: 'string' },
        series: { type: 'string' },
        temperature: { type: 'string' },
        'temperature-unit': { type: 'string' },
        'time-unit': { type: 'string' },
        dates: { type: 'boolean', default: false },
        'value-unit': { type: 'string' },
        sheet: { type: 'string' },
        'header-row': { type: 'string' },
        'lower-limit': { type: 'string' },
        'upper-limit': { type: 'string' },
        order: { type: 'string' },
        'error-model': { type: 'string' },
        confidence: { type: 'string' },
        'storage-temperature': { type: 'string' },
        json: { type: 'boolean', default: false },
        help: { type: 'boolean', default: false },
      },
    });
    if (values.help) return { ok: true, help: true };
    if (positionals.length !== 1) {
      return {
        ok: false,
        message: positionals.length === 0 ? 'Name one data file.' : 'Name exactly one data file.',
      };
    }
    if (values.time === undefined || values.value === undefined) {
      return { ok: false, message: 'Both --time COL and --value COL are required.' };
    }
    const temperatureUnitText = values['temperature-unit'];
    const temperatureUnit =
      temperatureUnitText === undefined ? undefined : tryParseTemperatureUnit(temperatureUnitText);
    if (temperatureUnit === null)
      return { ok: false, message: `--temperature-unit: "${temperatureUnitText}" is not C or K.` };
    const order = values.order;
    if (order !== undefined && !['0', '1', '2'].includes(order))
      return { ok: false, message: '--order must be 0, 1 or 2.' };
    const errorModel = values['error-model'] ?? 'auto';
    if (errorModel !== 'auto' && errorModel !== 'constant' && errorModel !== 'proportional') {
      return { ok: false, message: '--error-model must be auto, constant or proportional.' };
    }
    const confidence = number('confidence', values.confidence) ?? 0.95;
    if (!(confidence > 0 && confidence < 1))
      return { ok: false, message: '--confidence must lie between 0 and 1, e.g. 0.95.' };
    const headerRow = number('header-row', values['header-row']) ?? 1;
    if (!Number.isInteger(headerRow) || headerRow < 0)
      return { ok: false, message: '--header-row must be 0 or a row number.' };
    const options: FitOptions = {
      file: positionals[0] as string,
      time: values.time,
      value: values.value,
      timeFormat: values.dates ? 'datetime' : 'elapsed',
      headerRow,
      errorModel,
      confidence,
      json: values.json ?? false,
    };
    if (values.series !== undefined) options.series = values.series;
    if (values.temperature !== undefined) options.temperature = values.temperature;
    if (temperatureUnit !== undefined) options.temperatureUnit = temperatureUnit;
    if (values['time-unit'] !== undefined) options.timeUnit = parseTimeUnit(values['time-unit']);
    if (values['value-unit'] !== undefined) options.valueUnit = values['value-unit'];
    if (values.sheet !== undefined) options.sheet = values.sheet;
    const lowerLimit = number('lower-limit', values['lower-limit']);
    const upperLimit = number('upper-limit', values['upper-limit']);
    const storageTemperature = number('storage-temperature', values['storage-temperature']);
    if (lowerLimit !== undefined) options.lowerLimit = lowerLimit;
    if (upperLimit !== undefined) options.upperLimit = upperLimit;
    if (lowerLimit !== undefined && upperLimit !== undefined && !(lowerLimit < upperLimit)) {
      return { ok: false, message: '--lower-limit must be below --upper-limit.' };
    }
    if (storageTemperature !== undefined) options.storageTemperature = storageTemperature;
    if (order !== undefined) options.order = Number(order) as IntegerOrder;
    return { ok: true, options };
  } catch (error) {
    return { ok: false, message: (error as Error).message };
  }
}
