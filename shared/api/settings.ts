/**
 * Organisation settings an administrator edits on `/admin/settings`, validated the same way
 * wherever they are read: signature meanings, analysis defaults, acceptance-criterion presets, the
 * time zone for reports, the report number format, and the security settings (password policy,
 * account lockout).
 *
 * The forms arrive as text (a server-rendered form posts strings): numbers are read from text, a
 * decimal comma is accepted ("95,0"), and every problem is reported against its field so the page
 * can show it beside that field.
 *
 * Report numbers are written with tokens: `{YYYY}` the year (`{YY}` its last two digits), and
 * exactly one running number `{N…}` whose width is the number of N (`{NNNN}` → `0007`). Between
 * tokens only letters, digits, `-`, `_` and `.` are allowed, so that a report number is also a
 * safe file name. Example: `formatReportNumber('QC-{YYYY}-{NNNNN}', { year: '2026', sequence: 7 })`
 * → `QC-2026-00007`.
 */
import { z } from 'zod';
import { TIME_UNITS } from '../kinetics/units.ts';
import { isKnownTimeZone } from '../time/zoned-time.ts';

export const CONFIDENCE_LEVELS = ['0.90', '0.95', '0.99'] as const;
export const PRESET_DIRECTIONS = ['decreasing', 'increasing', 'either'] as const;
export const DEFAULT_REPORT_NUMBER_FORMAT = 'RL-{YYYY}-{NNNN}';
export const MAX_SIGNATURE_MEANINGS = 10;
export const MAX_ACCEPTANCE_PRESETS = 30;
/** Blank preset rows the settings form offers below the saved ones. */
export const BLANK_PRESET_ROWS = 3;

/** Bounds of the security settings. */
export const SECURITY_BOUNDS = {
  // NIST SP 800-63B §5.1.1.2 (2017) asks for at least 8 characters and for allowing at least 64.
  passwordMinLength: { min: 8, max: 64 },
  // Lower case, upper case, digits, other characters: four classes at most.
  passwordRequireClasses: { min: 1, max: 4 },
  // Common practice: lock after 3 to 10 failed sign-ins in a row, for minutes to a day.
  lockoutThreshold: { min: 3, max: 10 },
  lockoutMinutes: { min: 5, max: 1440 },
} as const;

// ---------------------------------------------------------------- report number format

export type ReportNumberPart =
  | { kind: 'literal'; text: string }
  | { kind: 'year'; digits: 2 | 4 }
  | { kind: 'sequence'; width: number };

const TOKEN = /\{([^{}]*)\}/g;
const LITERAL = /^[A-Za-z0-9._-]*$/;
const MAX_FORMAT_LENGTH = 40;
const MAX_SEQUENCE_WIDTH = 8;

/** The parts of a report number format, or the problems that make it unusable (never both). */
export function parseReportNumberFormat(
  format: string,
): { ok: true; parts: ReportNumberPart[] } | { ok: false; problems: string[] } {
  const problems: string[] = [];
  const parts: ReportNumberPart[] = [];
  if (format.length === 0) return { ok: false, problems: ['Give a format, e.g. RL-{YYYY}-{NNNN}.'] };
  if (format.length > MAX_FORMAT_LENGTH)
    problems.push(`The format can be at most ${MAX_FORMAT_LENGTH} characters.`);
  const literal = (text: string) => {
    if (text === '') return;
    if (/[{}]/.test(text)) problems.push('A brace is not closed: write tokens as {YYYY} or {NNNN}.');
    else if (!LITERAL.test(text))
      problems.push(`"${text}" has characters a report number cannot hold; use letters, digits, - _ or .`);
    parts.push({ kind: 'literal', text });
  };
  let end = 0;
  let oversized = false;
  for (const match of format.matchAll(TOKEN)) {
    literal(format.slice(end, match.index));
    end = match.index + match[0].length;
    const token = match[1] ?? '';
    if (token === 'YYYY' || token === 'YY') parts.push({ kind: 'year', digits: token.length as 2 | 4 });
    else if (/^N+$/.test(token) && token.length <= MAX_SEQUENCE_WIDTH)
      parts.push({ kind: 'sequence', width: token.length });
    else if (/^N+$/.test(token)) {
      oversized = true;
      problems.push(`The running number can have at most ${MAX_SEQUENCE_WIDTH} digits ({NNNNNNNN}).`);
    } else problems.push(`{${token}} is not a token; use {YYYY}, {YY} or a running number such as {NNNN}.`);
  }
  literal(format.slice(end));
  const sequences = parts.filter((part) => part.kind === 'sequence').length;
  if (sequences === 0 && !oversized)
    problems.push('The format needs a running number such as {NNNN}, or two reports would share a number.');
  if (sequences > 1) problems.push('The format can hold only one running number.');
  return problems.length > 0 ? { ok: false, problems: [...new Set(problems)] } : { ok: true, parts };
}

/**
 * The text before and after the running number for `year` (the four-digit year as text), and the
 * running number's width. Throws TypeError for a format `parseReportNumberFormat` refuses.
 */
export function reportNumberFrame(
  format: string,
  year: string,
): { prefix: string; suffix: string; width: number } {
  const parsed = parseReportNumberFormat(format);
  if (!parsed.ok) throw new TypeError(`not a usable report number format: ${parsed.problems.join(' ')}`);
  const index = parsed.parts.findIndex((part) => part.kind === 'sequence');
  const text = (parts: ReportNumberPart[]) =>
    parts
      .map((part) =>
        part.kind === 'literal' ? part.text : part.kind === 'year' ? year.slice(4 - part.digits) : '',
      )
      .join('');
  const sequence = parsed.parts[index] as { width: number };
  return {
    prefix: text(parsed.parts.slice(0, index)),
    suffix: text(parsed.parts.slice(index + 1)),
    width: sequence.width,
  };
}

/** A report number: the frame for `year` around `sequence`, zero-padded to the width (never cut). */
export function formatReportNumber(format: string, input: { year: string; sequence: number }): string {
  const frame = reportNumberFrame(format, input.year);
  return `${frame.prefix}${String(input.sequence).padStart(frame.width, '0')}${frame.suffix}`;
}

// ---------------------------------------------------------------- time zones

export { isKnownTimeZone, knownTimeZones } from '../time/zoned-time.ts';

// ---------------------------------------------------------------- form schemas

const decimalText = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$/;

function optionalLimit(label: string) {
  return z.preprocess(
    (raw) => {
      const text = typeof raw === 'string' ? raw.trim() : raw;
      if (text === undefined || text === null || text === '') return null;
      if (typeof text === 'number') return text;
      return decimalText.test(String(text)) ? Number(String(text).replace(',', '.')) : Number.NaN;
    },
    z
      .number({ error: `${label} must be a number, e.g. 95 or 95.5.` })
      .min(-1e12, `${label} is too small.`)
      .max(1e12, `${label} is too large.`)
      .nullable(),
  );
}

const requiredText = (label: string, max: number) =>
  z
    .string({ error: `${label} is required.` })
    .trim()
    .min(1, `${label} is required.`)
    .max(max, `${label} can be at most ${max} characters.`);

function wholeNumber(label: string, bounds: { min: number; max: number }) {
  return z.preprocess(
    (raw) => (typeof raw === 'string' && /^\s*\d+\s*$/.test(raw) ? Number(raw) : raw),
    z
      .number({ error: `${label} must be a whole number from ${bounds.min} to ${bounds.max}.` })
      .int(`${label} must be a whole number.`)
      .min(bounds.min, `${label} must be at least ${bounds.min}.`)
      .max(bounds.max, `${label} must be at most ${bounds.max}.`),
  );
}

export const acceptancePresetSchema = z
  .object({
    attribute: requiredText('Attribute', 120),
    unit: requiredText('Unit', 60),
    direction: z.enum(PRESET_DIRECTIONS, { error: 'Choose decreasing, increasing or either.' }),
    lowerLimit: optionalLimit('Lower limit'),
    upperLimit: optionalLimit('Upper limit'),
  })
  .refine((preset) => preset.lowerLimit !== null || preset.upperLimit !== null, {
    path: ['lowerLimit'],
    message: 'Give a lower limit, an upper limit or both.',
  })
  .refine(
    (preset) =>
      preset.lowerLimit === null || preset.upperLimit === null || preset.lowerLimit < preset.upperLimit,
    { path: ['upperLimit'], message: 'The upper limit must be above the lower limit.' },
  );

export type AcceptancePresetInput = z.output<typeof acceptancePresetSchema>;

const PRESET_FIELDS = ['attribute', 'unit', 'direction', 'lowerLimit', 'upperLimit'] as const;
const isBlankRow = (row: Record<string, unknown>) =>
  ['attribute', 'unit', 'lowerLimit', 'upperLimit'].every((field) => {
    const value = row[field];
    return value === undefined || value === null || String(value).trim() === '';
  });

/** Blank rows are dropped; an error's index is the row the admin sees (blank rows included). */
const presetList = z
  .array(z.record(z.string(), z.unknown()), { error: 'The presets could not be read.' })
  .transform((rows, context) => {
    const presets: AcceptancePresetInput[] = [];
    const seen = new Set<string>();
    rows.forEach((row, index) => {
      if (isBlankRow(row)) return;
      const parsed = acceptancePresetSchema.safeParse(row);
      if (!parsed.success) {
        for (const issue of parsed.error.issues)
          context.addIssue({ code: 'custom', path: [index, ...issue.path], message: issue.message });
        return;
      }
      const key = `${parsed.data.attribute.toLowerCase()}|${parsed.data.unit.toLowerCase()}`;
      if (seen.has(key))
        context.addIssue({
          code: 'custom',
          path: [index, 'attribute'],
          message: `"${parsed.data.attribute}" in ${parsed.data.unit} is listed already; keep one row.`,
        });
      seen.add(key);
      presets.push(parsed.data);
    });
    if (presets.length > MAX_ACCEPTANCE_PRESETS)
      context.addIssue({ code: 'custom', message: `At most ${MAX_ACCEPTANCE_PRESETS} presets.` });
    return presets;
  });

const signatureMeaningList = z.preprocess(
  (raw) => (Array.isArray(raw) ? raw.map(String) : String(raw ?? '').split(/\r?\n/)),
  z
    .array(z.string())
    .transform((items) => items.map((item) => item.trim()).filter((item) => item !== ''))
    .pipe(
      z
        .array(z.string().max(60, 'A meaning can be at most 60 characters.'))
        .min(1, 'List at least one meaning: a signature must say what it means (21 CFR 11.50(a)(3)).')
        .max(MAX_SIGNATURE_MEANINGS, `At most ${MAX_SIGNATURE_MEANINGS} meanings.`)
        .refine((items) => new Set(items.map((item) => item.toLowerCase())).size === items.length, {
          message: 'Each meaning can be listed only once.',
        }),
    ),
);

export const organisationSettingsFormSchema = z.object({
  signatureMeanings: signatureMeaningList,
  defaultConfidenceLevel: z
    .enum(CONFIDENCE_LEVELS, { error: 'Choose 0.90, 0.95 or 0.99.' })
    .transform((level) => Number(level)),
  defaultTimeUnit: z.enum(TIME_UNITS, { error: `Choose one of ${TIME_UNITS.join(', ')}.` }),
  defaultValueUnit: requiredText('The default value unit', 60),
  acceptancePresets: presetList,
  timeZone: z.string().trim().refine(isKnownTimeZone, {
    message: 'Not an IANA time zone this server knows; write it like Europe/Berlin or America/Chicago.',
  }),
  reportNumberFormat: z
    .string()
    .trim()
    .superRefine((format, context) => {
      const parsed = parseReportNumberFormat(format);
      if (!parsed.ok) context.addIssue({ code: 'custom', message: parsed.problems.join(' ') });
    }),
});

export type OrganisationSettingsInput = z.output<typeof organisationSettingsFormSchema>;

export const securitySettingsFormSchema = z.object({
  passwordMinLength: wholeNumber('The minimum length', SECURITY_BOUNDS.passwordMinLength),
  passwordRequireClasses: wholeNumber(
    'The number of character classes',
    SECURITY_BOUNDS.passwordRequireClasses,
  ),
  lockoutThreshold: wholeNumber('The failed sign-ins before locking', SECURITY_BOUNDS.lockoutThreshold),
  lockoutMinutes: wholeNumber('The lockout period', SECURITY_BOUNDS.lockoutMinutes),
});

export type SecuritySettingsInput = z.output<typeof securitySettingsFormSchema>;

/**
 * The posted settings form as the schema reads it: preset rows come as flat fields
 * `preset-<row>-<field>` (a plain form post has no nested names).
 */
export function organisationSettingsFromForm(body: Record<string, unknown>) {
  const rows = new Map<number, Record<string, unknown>>();
  for (const [key, value] of Object.entries(body)) {
    const match = /^preset-(\d{1,2})-(\w+)$/.exec(key);
    if (!match || !PRESET_FIELDS.includes(match[2] as (typeof PRESET_FIELDS)[number])) continue;
    const row = Number(match[1]);
    rows.set(row, { ...rows.get(row), [match[2]!]: value });
  }
  const count = rows.size === 0 ? 0 : Math.max(...rows.keys()) + 1;
  return {
    signatureMeanings: body.signatureMeanings,
    defaultConfidenceLevel: body.defaultConfidenceLevel,
    defaultTimeUnit: body.defaultTimeUnit,
    defaultValueUnit: body.defaultValueUnit,
    acceptancePresets: Array.from({ length: count }, (_unused, row) => rows.get(row) ?? {}),
    timeZone: body.timeZone,
    reportNumberFormat: body.reportNumberFormat,
  };
}

/** Field path → first message: `acceptancePresets.2.upperLimit`, `timeZone`. */
export function settingsFieldErrors(error: z.ZodError): Record<string, string> {
  const errors: Record<string, string> = {};
  for (const issue of error.issues) {
    const field = issue.path.map(String).join('.') || 'form';
    errors[field] ??= issue.message;
  }
  return errors;
}

/** What the settings API answers (`GET /api/admin/settings`). */
export interface OrganisationSettingsResponse {
  signatureMeanings: string[];
  defaultConfidenceLevel: number;
  defaultTimeUnit: string;
  defaultValueUnit: string;
  acceptancePresets: AcceptancePresetInput[];
  timeZone: string;
  reportNumberFormat: string;
  nextReportNumber: string;
  passwordMinLength: number;
  passwordRequireClasses: number;
  lockoutThreshold: number;
  lockoutMinutes: number;
}
