/**
 * The temperature-log form: what an analyst types beside the logger file, read the same way by
 * the server (`POST /temperature-logs`) and any client, through the two schemas the `mkt` command
 * uses (`temperatureLogMappingSchema`, `temperatureLogSettingsSchema`).
 *
 * The form arrives as text: blank means "not given" (the default applies), numbers may carry a
 * decimal comma ("25,0"); every refusal is a message keyed by the form field it belongs to.
 *
 * Example: `readTemperatureLogForm({ title: 'Store room B', timeColumn: 'Recorded at',
 * temperatureColumn: 'Temperature', rangeMaxC: '25' })` gives `{ ok: true, title: 'Store room B',
 * mapping: { headerRow: 1, timeFormat: 'auto', ... }, settings: { rangeMaxC: 25, window: { value:
 * 30, unit: 'd' }, ... } }`.
 */
import { z } from 'zod';
import { parseNumberCell } from '../intake/parse-number-cell.ts';
import {
  type TemperatureLogMapping,
  temperatureLogMappingSchema,
} from '../intake/temperature-log-from-grid.ts';
import type { ExcursionImpact } from '../kinetics/temperature/excursion-impact.ts';
import type { TemperatureLogDocument } from '../kinetics/temperature/temperature-log-document.ts';
import {
  type TemperatureLogSettings,
  temperatureLogSettingsSchema,
} from '../kinetics/temperature/temperature-log-settings.ts';
import { TIME_UNITS, type TimeUnit } from '../kinetics/units.ts';

export const TEMPERATURE_LOG_FIELDS = [
  'title',
  'timeColumn',
  'temperatureColumn',
  'timeUnit',
  'temperatureUnit',
  'sheet',
  'headerRow',
  'rangeMinC',
  'rangeMaxC',
  'activationEnergyKJPerMol',
  'window',
  'windowStep',
  'maxInterval',
  'studyId',
  'latestValue',
] as const;
export type TemperatureLogField = (typeof TEMPERATURE_LOG_FIELDS)[number];

export type TemperatureLogForm =
  | {
      ok: true;
      title: string;
      mapping: TemperatureLogMapping;
      settings: TemperatureLogSettings;
      /** The study whose Arrhenius fit prices the log; none when blank. */
      studyId?: number;
      /** The batch's latest result, in the study's unit, for the margin to the limit. */
      latestValue?: number;
    }
  | { ok: false; errors: Partial<Record<TemperatureLogField, string>> };

const titleSchema = z
  .string()
  .trim()
  .min(1, 'Say what the log is of, e.g. "Store room B, July 2026".')
  .max(200, 'The title can be at most 200 characters.');

function text(fields: Record<string, unknown>, name: TemperatureLogField): string | undefined {
  const value = fields[name];
  if (typeof value !== 'string') return undefined;
  const trimmed = value.trim();
  return trimmed === '' ? undefined : trimmed;
}

export function readTemperatureLogForm(fields: Record<string, unknown>): TemperatureLogForm {
  const errors: Partial<Record<TemperatureLogField, string>> = {};
  const number = (name: TemperatureLogField, example: string): number | undefined => {
    const raw = text(fields, name);
    if (raw === undefined) return undefined;
    const parsed = parseNumberCell(raw);
    if (parsed.ok) return parsed.value;
    errors[name] = `Write a number, e.g. ${example}.`;
    return undefined;
  };
  const title = titleSchema.safeParse(fields.title ?? '');
  if (!title.success) errors.title = title.error.issues[0]?.message ?? 'Give a title.';
  const timeUnit = text(fields, 'timeUnit');
  if (timeUnit !== undefined && !(TIME_UNITS as readonly string[]).includes(timeUnit))
    errors.timeUnit = 'Choose a time unit from the list.';
  const temperatureUnit = text(fields, 'temperatureUnit');
  if (temperatureUnit !== undefined && temperatureUnit !== 'C' && temperatureUnit !== 'K')
    errors.temperatureUnit = 'Choose °C or K.';
  const headerRow = number('headerRow', '1') ?? 1;
  if (!errors.headerRow && !(Number.isInteger(headerRow) && headerRow >= 0))
    errors.headerRow = 'Give the row number of the headers (0 when there is none).';
  const mapping = temperatureLogMappingSchema.safeParse({
    sheet: text(fields, 'sheet'),
    headerRow,
    timeColumn: text(fields, 'timeColumn') ?? '',
    timeFormat: 'auto',
    timeUnit: errors.timeUnit ? undefined : timeUnit,
    temperatureColumn: text(fields, 'temperatureColumn') ?? '',
    temperatureUnit: errors.temperatureUnit ? undefined : temperatureUnit,
  });
  if (!mapping.success) {
    for (const issue of mapping.error.issues) {
      const field = String(issue.path[0]) as TemperatureLogField;
      errors[field] ??= issue.message;
    }
  }
  const settings = temperatureLogSettingsSchema.safeParse({
    activationEnergyKJPerMol: number('activationEnergyKJPerMol', '83.144'),
    rangeMinC: number('rangeMinC', '15'),
    rangeMaxC: number('rangeMaxC', '25'),
    window: text(fields, 'window'),
    windowStep: text(fields, 'windowStep'),
    maxInterval: text(fields, 'maxInterval'),
  });
  if (!settings.success) {
    for (const issue of settings.error.issues) {
      const field = String(issue.path[0]) as TemperatureLogField;
      errors[field] ??= issue.message;
    }
  }
  const studyText = text(fields, 'studyId');
  const studyId = studyText === undefined ? undefined : Number(studyText);
  if (studyId !== undefined && !(Number.isInteger(studyId) && studyId > 0))
    errors.studyId = 'Choose a study from the list, or none.';
  const latestValue = number('latestValue', '98.6');
  if (latestValue !== undefined && studyId === undefined)
    errors.latestValue ??= 'A latest result needs the study it belongs to: choose the study too.';
  // Said beside the field even when another setting is also wrong (the schema's own check of the
  // range runs only once every field is valid).
  const low = settings.success ? settings.data.rangeMinC : number('rangeMinC', '15');
  const high = settings.success ? settings.data.rangeMaxC : number('rangeMaxC', '25');
  if (low !== undefined && high !== undefined && !(low < high))
    errors.rangeMaxC ??= 'The lowest labelled temperature must be below the highest.';
  if (Object.keys(errors).length > 0 || !title.success || !mapping.success || !settings.success)
    return { ok: false, errors };
  return {
    ok: true,
    title: title.data,
    mapping: mapping.data,
    settings: settings.data,
    ...(studyId === undefined ? {} : { studyId }),
    ...(latestValue === undefined ? {} : { latestValue }),
  };
}

/** What a temperature log cost a product, priced in a study's Arrhenius fit (stored with the assessment). */
export interface StudyImpact extends ExcursionImpact {
  source: {
    studyId: number;
    studyTitle: string;
    product: string;
    attribute: string;
    unit: string;
    analysisRunId: number;
    engineVersion: string;
    activationEnergyKJPerMol: number;
    fittedRangeC: [number, number];
  };
  latestValue: number | null;
  limit: number | null;
  /** Time unit of the log (durations above are in it). */
  timeUnit: TimeUnit;
}

/** What is stored as an assessment's result: the log's document and, with a study, what the log cost it. */
export type StoredTemperatureLogResult = TemperatureLogDocument & { impact: StudyImpact | null };
