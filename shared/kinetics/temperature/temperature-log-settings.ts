/**
 * The settings of a temperature-log assessment — ΔH, the labelled range, the rolling window and
 * the longest interval that is not a gap — as one zod schema shared by the `mkt` command and the
 * upload form, and their conversion to the engine's options in the log's own time unit.
 *
 * Durations are written with their unit ("30 d", "24h", "90 min"). The default window is 30 days:
 * USP <1079.2> asks that excursions be judged over a running period rather than over a whole year,
 * because a whole-year MKT dilutes a short spike (from memory: the chapter's examples use a
 * 30-day running MKT for controlled room temperature; the lab states its own window).
 *
 * Example: `temperatureLogSettingsSchema.parse({ window: '24 h', rangeMaxC: 25 })` gives
 * `{ activationEnergyKJPerMol: 83.144, window: { value: 24, unit: 'h' }, rangeMaxC: 25 }`.
 */
import { z } from 'zod';
import { parseNumberCell } from '../../intake/parse-number-cell.ts';
import { convertTime, type TimeUnit, tryParseTimeUnit } from '../units.ts';
import type { TemperatureLogOptions } from './temperature-log.ts';

export interface DurationSetting {
  value: number;
  unit: TimeUnit;
}

/** Reads "30 d", "24h", "1,5 h"; null when the text is not a positive number with a time unit. */
export function parseDurationText(text: string): DurationSetting | null {
  const match = /^\s*([0-9]+(?:[.,][0-9]*)?(?:e[+-]?[0-9]+)?)\s*([A-Za-z]+)\.?\s*$/i.exec(text);
  if (!match) return null;
  const number = parseNumberCell(match[1] as string);
  const unit = tryParseTimeUnit(match[2] as string);
  if (!number.ok || !(number.value > 0) || unit === null) return null;
  return { value: number.value, unit };
}

const durationObject = z.object({
  value: z.number().positive(),
  unit: z.enum(['s', 'min', 'h', 'd', 'week', 'month', 'year']),
});

/** A duration as text with its unit ("30 d") or as `{ value, unit }`; one message names the field. */
const duration = (what: string) =>
  z.unknown().transform((input, context): DurationSetting => {
    const parsed =
      typeof input === 'string' ? parseDurationText(input) : durationObject.safeParse(input).data;
    if (!parsed) {
      context.addIssue({
        code: 'custom',
        message: `Write the ${what} as a positive number and a time unit, e.g. "30 d" or "24 h".`,
      });
      return z.NEVER;
    }
    return parsed;
  });

const celsius = z.number().finite().min(-273.15, 'A temperature cannot be below absolute zero.');

export const DEFAULT_WINDOW: DurationSetting = { value: 30, unit: 'd' };

export const temperatureLogSettingsSchema = z
  .object({
    /** ΔH in kJ/mol; USP <1160> gives 83.144 "unless more accurate information is available". */
    activationEnergyKJPerMol: z.number().positive('ΔH must be a positive number of kJ/mol.').default(83.144),
    /** The labelled storage range, °C; either side may be open. */
    rangeMinC: celsius.optional(),
    rangeMaxC: celsius.optional(),
    /** Length of the rolling windows; 30 days by default. */
    window: duration('window').default(DEFAULT_WINDOW),
    /** Distance between successive windows; a thirtieth of the window by default. */
    windowStep: duration('window step').optional(),
    /** Longest interval that is not a gap; twice the median interval by default. */
    maxInterval: duration('longest interval').optional(),
  })
  .refine((s) => s.rangeMinC === undefined || s.rangeMaxC === undefined || s.rangeMinC < s.rangeMaxC, {
    message: 'The lowest labelled temperature must be below the highest.',
    path: ['rangeMaxC'],
  });

export type TemperatureLogSettingsInput = z.input<typeof temperatureLogSettingsSchema>;
export type TemperatureLogSettings = z.output<typeof temperatureLogSettingsSchema>;

/** The engine's options for a log measured in `timeUnit`. */
export function temperatureLogOptions(
  settings: TemperatureLogSettings,
  timeUnit: TimeUnit,
): TemperatureLogOptions {
  const inLogUnit = (setting: DurationSetting) => convertTime(setting.value, setting.unit, timeUnit);
  const options: TemperatureLogOptions = {
    activationEnergy: settings.activationEnergyKJPerMol * 1000,
    windowLength: inLogUnit(settings.window),
  };
  if (settings.windowStep) options.windowStep = inLogUnit(settings.windowStep);
  if (settings.maxInterval) options.maxInterval = inLogUnit(settings.maxInterval);
  if (settings.rangeMinC !== undefined || settings.rangeMaxC !== undefined) {
    options.rangeC = {};
    if (settings.rangeMinC !== undefined) options.rangeC.minC = settings.rangeMinC;
    if (settings.rangeMaxC !== undefined) options.rangeC.maxC = settings.rangeMaxC;
  }
  return options;
}
