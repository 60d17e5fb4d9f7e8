/**
 * The options of the `mkt` command, read with node:util `parseArgs` and checked through the same
 * zod schemas as the upload form (`temperatureLogMappingSchema`, `temperatureLogSettingsSchema`).
 *
 * Example: `parseMktArguments(['--time', 'Recorded at', '--temperature', 'Temp', 'log.csv'])`
 * gives `{ ok: true, options: { file: 'log.csv', mapping: {...}, settings: {...}, json: false } }`.
 */
import { parseArgs } from 'node:util';
import {
  type TemperatureLogMapping,
  temperatureLogMappingSchema,
} from '../../shared/intake/temperature-log-from-grid.ts';
import {
  type TemperatureLogSettings,
  temperatureLogSettingsSchema,
} from '../../shared/kinetics/temperature/temperature-log-settings.ts';
import { tryParseTemperatureUnit, tryParseTimeUnit } from '../../shared/kinetics/units.ts';
import { numberOption, withNegativeNumbersAttached } from './cli-options.ts';

export interface MktOptions {
  file: string;
  mapping: TemperatureLogMapping;
  settings: TemperatureLogSettings;
  json: boolean;
}

export type MktArguments =
  | { ok: true; options: MktOptions }
  | { ok: true; help: true }
  | { ok: false; message: string };

export const MKT_USAGE = `Usage: npm run --silent mkt -- [options] FILE

Assesses a temperature log (CSV or XLSX from a data logger): mean kinetic temperature over the
whole log and over rolling windows, minimum, maximum, time outside the labelled range, each
excursion and each gap.

Required:
  --time COL                 column of reading times (header text or letter): date-times, or
                             elapsed times in --time-unit
  --temperature COL          column of temperatures
Optional:
  --time-unit U              s, min, h, d, week (and month, year for elapsed times); default:
                             from the header, else h for date-times
  --dates                    read the time column as date-times (default: detected)
  --temperature-unit C|K     unit of the temperature column (default: from the header, else C)
  --activation-energy KJ     ΔH in kJ/mol (default 83.144, USP <1160>)
  --range-min C              lowest labelled storage temperature, °C
  --range-max C              highest labelled storage temperature, °C
  --window D                 length of the rolling windows, e.g. "30 d", "24 h" (default 30 d)
  --window-step D            distance between successive windows (default: window / 30)
  --max-interval D           longest interval that is not a gap (default: twice the median)
  --sheet NAME               worksheet (default: the first)
  --header-row N             row of the headers, 1-based; 0 = none (default 1)
  --json                     print one JSON document instead of text
  --help                     show this text

Statistical and kinetic estimates support, and do not replace, qualified judgement, applicable
guidance and the laboratory's own approved procedures.`;

const SETTING_OPTION: Record<string, string> = {
  activationEnergyKJPerMol: '--activation-energy',
  rangeMinC: '--range-min',
  rangeMaxC: '--range-max',
  window: '--window',
  windowStep: '--window-step',
  maxInterval: '--max-interval',
};

export function parseMktArguments(argv: readonly string[]): MktArguments {
  try {
    const { values, positionals } = parseArgs({
      args: withNegativeNumbersAttached(argv),
      allowPositionals: true,
      strict: true,
      options: {
        time: { type: 'string' },
        temperature: { type: 'string' },
        'time-unit': { type: 'string' },
        dates: { type: 'boolean', default: false },
        'temperature-unit': { type: 'string' },
        'activation-energy': { type: 'string' },
        'range-min': { type: 'string' },
        'range-max': { type: 'string' },
        window: { type: 'string' },
        'window-step': { type: 'string' },
        'max-interval': { type: 'string' },
        sheet: { type: 'string' },
        'header-row': { type: 'string' },
        json: { type: 'boolean', default: false },
        help: { type: 'boolean', default: false },
      },
    });
    if (values.help) return { ok: true, help: true };
    if (positionals.length !== 1) {
      return {
        ok: false,
        message: positionals.length === 0 ? 'Name one log file.' : 'Name exactly one log file.',
      };
    }
    if (values.time === undefined || values.temperature === undefined) {
      return { ok: false, message: 'Both --time COL and --temperature COL are required.' };
    }
    const timeUnitText = values['time-unit'];
    const timeUnit = timeUnitText === undefined ? undefined : tryParseTimeUnit(timeUnitText);
    if (timeUnit === null) {
      return {
        ok: false,
        message: `--time-unit: "${timeUnitText}" is not one of s, min, h, d, week, month, year.`,
      };
    }
    const temperatureUnitText = values['temperature-unit'];
    const temperatureUnit =
      temperatureUnitText === undefined ? undefined : tryParseTemperatureUnit(temperatureUnitText);
    if (temperatureUnit === null) {
      return { ok: false, message: `--temperature-unit: "${temperatureUnitText}" is not C or K.` };
    }
    const headerRow = numberOption('header-row', values['header-row']) ?? 1;
    if (!Number.isInteger(headerRow) || headerRow < 0) {
      return { ok: false, message: '--header-row must be 0 or a row number.' };
    }
    const mapping = temperatureLogMappingSchema.parse({
      sheet: values.sheet,
      headerRow,
      timeColumn: values.time,
      timeFormat: values.dates ? 'datetime' : 'auto',
      timeUnit,
      temperatureColumn: values.temperature,
      temperatureUnit,
    });
    const settings = temperatureLogSettingsSchema.safeParse({
      activationEnergyKJPerMol: numberOption('activation-energy', values['activation-energy']),
      rangeMinC: numberOption('range-min', values['range-min']),
      rangeMaxC: numberOption('range-max', values['range-max']),
      window: values.window,
      windowStep: values['window-step'],
      maxInterval: values['max-interval'],
    });
    if (!settings.success) {
      const issue = settings.error.issues[0];
      const option = SETTING_OPTION[String(issue?.path[0])] ?? 'options';
      return { ok: false, message: `${option}: ${issue?.message ?? 'not valid.'}` };
    }
    return {
      ok: true,
      options: {
        file: positionals[0] as string,
        mapping,
        settings: settings.data,
        json: values.json ?? false,
      },
    };
  } catch (error) {
    return { ok: false, message: (error as Error).message };
  }
}
