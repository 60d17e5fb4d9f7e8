/**
 * The options of the `fit` command, read with node:util `parseArgs` and checked into one record.
 *
 * Numbers may be written with a decimal comma ("--lower-limit 90,0") and may be negative
 * ("--lower-limit -5", as "--lower-limit=-5"). Units are read with the
 * engine's own spellings (`parseTimeUnit`). Anything wrong — an unknown option, a missing file,
 * a limit that is not a number — gives `{ ok: false, message }` naming the option.
 *
 * Example: `parseFitArguments(['--time', 'Month', '--value', 'Assay', 'data.csv'])` gives
 * `{ ok: true, options: { file: 'data.csv', time: 'Month', value: 'Assay', json: false, ... } }`.
 */
import { parseArgs } from 'node:util';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import {
  DECLARED_ANSWERS,
  DECLARED_CHANGES,
  type DeclaredAnswer,
  type DeclaredChange,
  STORAGE_CATEGORIES,
  type StorageCategory,
} from '../../shared/kinetics/stability/q1e-declaration.ts';
import type { IntegerOrder } from '../../shared/kinetics/types.ts';
import {
  parseTimeUnit,
  type TemperatureUnit,
  type TimeUnit,
  tryParseTemperatureUnit,
} from '../../shared/kinetics/units.ts';
import { numberOption, withNegativeNumbersAttached } from './cli-options.ts';

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
  /** The study's working order, used only where the data name none (`--working-order`). */
  workingOrder?: { order: IntegerOrder; reason: string };
  errorModel: 'auto' | 'constant' | 'proportional';
  confidence: number;
  storageTemperature?: number;
  /** The ICH Q1E declaration; every fact left out is unknown and takes the most conservative branch. */
  q1e: {
    storage: StorageCategory;
    intermediateTemperatureC?: number;
    acceleratedTemperatureC?: number;
    acceleratedChange: DeclaredChange;
    intermediateChange: DeclaredChange;
    littleChange: DeclaredAnswer;
    supportingData: DeclaredAnswer;
  };
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
  --working-order 0|1|2    the study's working order, used only where the data name none
  --working-order-reason T why (e.g. the protocol's words); required with --working-order
  --error-model M          auto, constant or proportional (default auto)
  --confidence P           confidence level, e.g. 0.95 (default 0.95)
  --storage-temperature T  the long-term storage temperature (°C): k is predicted there from the
                           Arrhenius fit, and only that condition proposes a shelf life
ICH Q1E extrapolation limit (what is not given is unknown: the most conservative branch, named
as an assumption in the output):
  --storage S              label storage: room-temperature, refrigerated or frozen
  --accelerated-temperature T   the accelerated condition (°C), e.g. 40 (25 when refrigerated)
  --intermediate-temperature T  the intermediate condition (°C), e.g. 30
  --accelerated-change C   significant change at accelerated, any attribute: none or significant
  --intermediate-change C  significant change at intermediate, any attribute: none or significant
  --little-change yes|no   long-term data show little or no change and variability
  --supporting-data yes|no relevant supporting data exist
  --json                   print one JSON document instead of tables
  --help                   show this text`;

export function parseFitArguments(argv: readonly string[]): FitArguments {
  try {
    const { values, positionals } = parseArgs({
      args: withNegativeNumbersAttached(argv),
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
        'working-order': { type: 'string' },
        'working-order-reason': { type: 'string' },
        'error-model': { type: 'string' },
        confidence: { type: 'string' },
        'storage-temperature': { type: 'string' },
        storage: { type: 'string' },
        'accelerated-temperature': { type: 'string' },
        'intermediate-temperature': { type: 'string' },
        'accelerated-change': { type: 'string' },
        'intermediate-change': { type: 'string' },
        'little-change': { type: 'string' },
        'supporting-data': { type: 'string' },
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
    const confidence = numberOption('confidence', values.confidence) ?? 0.95;
    if (!(confidence > 0 && confidence < 1))
      return { ok: false, message: '--confidence must lie between 0 and 1, e.g. 0.95.' };
    const headerRow = numberOption('header-row', values['header-row']) ?? 1;
    if (!Number.isInteger(headerRow) || headerRow < 0)
      return { ok: false, message: '--header-row must be 0 or a row number.' };
    const choice = <T extends string>(name: string, allowed: readonly T[]): T => {
      const text = (values as Record<string, string | boolean | undefined>)[name];
      if (text === undefined) return 'unknown' as T;
      if (typeof text === 'string' && (allowed as readonly string[]).includes(text)) return text as T;
      throw new KineticsError(
        'invalid-input',
        `--${name} must be ${allowed.filter((value) => value !== 'unknown').join(', ')} (or left out: unknown).`,
      );
    };
    const q1e: FitOptions['q1e'] = {
      storage: choice('storage', STORAGE_CATEGORIES),
      acceleratedChange: choice('accelerated-change', DECLARED_CHANGES),
      intermediateChange: choice('intermediate-change', DECLARED_CHANGES),
      littleChange: choice('little-change', DECLARED_ANSWERS),
      supportingData: choice('supporting-data', DECLARED_ANSWERS),
    };
    const accelerated = numberOption('accelerated-temperature', values['accelerated-temperature']);
    const intermediate = numberOption('intermediate-temperature', values['intermediate-temperature']);
    if (accelerated !== undefined) q1e.acceleratedTemperatureC = accelerated;
    if (intermediate !== undefined) q1e.intermediateTemperatureC = intermediate;
    const options: FitOptions = {
      file: positionals[0] as string,
      q1e,
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
    const lowerLimit = numberOption('lower-limit', values['lower-limit']);
    const upperLimit = numberOption('upper-limit', values['upper-limit']);
    const storageTemperature = numberOption('storage-temperature', values['storage-temperature']);
    if (lowerLimit !== undefined) options.lowerLimit = lowerLimit;
    if (upperLimit !== undefined) options.upperLimit = upperLimit;
    if (lowerLimit !== undefined && upperLimit !== undefined && !(lowerLimit < upperLimit)) {
      return { ok: false, message: '--lower-limit must be below --upper-limit.' };
    }
    if (storageTemperature !== undefined) options.storageTemperature = storageTemperature;
    if (order !== undefined) options.order = Number(order) as IntegerOrder;
    const working = values['working-order'];
    const workingReason = values['working-order-reason']?.trim();
    if (working !== undefined && !['0', '1', '2'].includes(working))
      return { ok: false, message: '--working-order must be 0, 1 or 2.' };
    if ((working === undefined) !== !workingReason)
      return { ok: false, message: '--working-order and --working-order-reason go together.' };
    if (working !== undefined && workingReason)
      options.workingOrder = { order: Number(working) as IntegerOrder, reason: workingReason };
    return { ok: true, options };
  } catch (error) {
    return { ok: false, message: (error as Error).message };
  }
}
