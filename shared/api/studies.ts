/**
 * The study form: what an analyst types to describe a stability study, validated the same way in
 * the browser and on the server (`POST /studies`, `POST /studies/:id`).
 *
 * The form arrives as text (a server-rendered form posts strings), so numbers are read from text:
 * blank means "not given", a decimal comma is accepted ("95,0"), anything else is refused with a
 * message beside the field. The acceptance criterion needs at least one limit, and a lower limit
 * below the upper one. Batches are written one per line or separated by commas or semicolons;
 * repeats are dropped, order is kept.
 *
 * Example: `studyFormSchema.parse({ title: 'Long-term 25 °C', product: 'Veltrazine 10 mg',
 * attribute: 'Assay', unit: '% of label claim', direction: 'decreasing', lowerLimit: '95,0',
 * batches: 'VZ-001, VZ-002' })` gives `lowerLimit: 95`, `upperLimit: null`,
 * `batches: ['VZ-001', 'VZ-002']`, and every Q1E statement `unknown`.
 *
 * The Q1E declaration (storage category, the intermediate and accelerated temperatures beside the
 * long-term storage temperature, significant change at each, little change, supporting data) is
 * optional field by field: what is not stated stays `unknown`, which the engine reads as the most
 * conservative answer. A declared intermediate or accelerated temperature must lie above the
 * long-term one, and the accelerated above the intermediate. A working order (0, 1, 2, blank for
 * none) needs its reason.
 */
import { z } from 'zod';
import {
  DECLARED_ANSWERS,
  DECLARED_CHANGES,
  STORAGE_CATEGORIES,
} from '../kinetics/stability/q1e-declaration.ts';

export const STUDY_DIRECTIONS = ['decreasing', 'increasing', 'either'] as const;
export const MAX_BATCHES = 100;

function optionalNumber(label: string, minimum: number, maximum: number) {
  return z.preprocess(
    (raw) => {
      if (raw === undefined || raw === null) return null;
      if (typeof raw === 'number') return raw;
      const text = String(raw).trim();
      if (text === '') return null;
      return /^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$/.test(text)
        ? Number(text.replace(',', '.'))
        : Number.NaN;
    },
    z
      .number({ error: `${label} must be a number, e.g. 95 or 95.5.` })
      .min(minimum, `${label} must be at least ${minimum}.`)
      .max(maximum, `${label} must be at most ${maximum}.`)
      .nullable(),
  );
}

const text = (label: string, max: number) =>
  z
    .string({ error: `${label} is required.` })
    .trim()
    .min(1, `${label} is required.`)
    .max(max, `${label} can be at most ${max} characters.`);

const batchList = z.preprocess(
  (raw) => {
    const items = Array.isArray(raw) ? raw.map(String) : String(raw ?? '').split(/[\n,;]/);
    return [...new Set(items.map((item) => item.trim()).filter((item) => item !== ''))];
  },
  z
    .array(z.string().max(80, 'A batch name can be at most 80 characters.'))
    .max(MAX_BATCHES, `At most ${MAX_BATCHES} batches.`),
);

const limitsSchema = z.object({
  lowerLimit: optionalNumber('Lower limit', -1e12, 1e12),
  upperLimit: optionalNumber('Upper limit', -1e12, 1e12),
});

const temperaturesSchema = z.object({
  storageTemperatureC: optionalNumber('Storage temperature', -273.15, 200),
  intermediateTemperatureC: optionalNumber('Intermediate temperature', -273.15, 200),
  acceleratedTemperatureC: optionalNumber('Accelerated temperature', -273.15, 200),
});

/**
 * The study's working order (issue 12 §3): blank for none, else 0, 1 or 2. The analysis uses it
 * only where the data do not name an order, and says so ("working order from the study").
 */
const workingOrderField = z.preprocess(
  (raw) =>
    raw === undefined || raw === null || String(raw).trim() === '' ? null : Number(String(raw).trim()),
  z
    .union([z.literal(0), z.literal(1), z.literal(2)], { error: 'Choose none, zero, first or second order.' })
    .nullable(),
);

/** Run the criterion checks whenever both limits read as numbers, even if other fields failed. */
const whenLimitsRead = {
  when: (payload: { value: unknown }) => limitsSchema.safeParse(payload.value).success,
};

export const studyFormSchema = z
  .object({
    title: text('Title', 200),
    product: text('Product', 200),
    attribute: text('Attribute', 120),
    unit: text('Unit', 60),
    direction: z.enum(STUDY_DIRECTIONS, { error: 'Choose decreasing, increasing or either.' }),
    ...limitsSchema.shape,
    storageTemperatureC: optionalNumber('Storage temperature', -273.15, 200),
    storageHumidityPercent: optionalNumber('Relative humidity', 0, 100),
    storageCategory: z
      .enum(STORAGE_CATEGORIES, { error: 'Choose not stated, room temperature, refrigerated or frozen.' })
      .default('unknown'),
    intermediateTemperatureC: optionalNumber('Intermediate temperature', -273.15, 200),
    acceleratedTemperatureC: optionalNumber('Accelerated temperature', -273.15, 200),
    acceleratedChange: z
      .enum(DECLARED_CHANGES, { error: 'Choose not stated, none or significant.' })
      .default('unknown'),
    intermediateChange: z
      .enum(DECLARED_CHANGES, { error: 'Choose not stated, none or significant.' })
      .default('unknown'),
    littleChange: z.enum(DECLARED_ANSWERS, { error: 'Choose not stated, yes or no.' }).default('unknown'),
    supportingData: z.enum(DECLARED_ANSWERS, { error: 'Choose not stated, yes or no.' }).default('unknown'),
    declarationBasis: z.string().trim().max(2000, 'The basis can be at most 2000 characters.').default(''),
    workingOrder: workingOrderField,
    workingOrderReason: z.string().trim().max(1000, 'The reason can be at most 1000 characters.').default(''),
    batches: batchList,
    notes: z.string().trim().max(4000, 'Notes can be at most 4000 characters.').default(''),
  })
  .refine((study) => study.lowerLimit !== null || study.upperLimit !== null, {
    path: ['lowerLimit'],
    message: 'Give a lower limit, an upper limit or both: the acceptance criterion needs at least one.',
    ...whenLimitsRead,
  })
  .refine(
    (study) => study.lowerLimit === null || study.upperLimit === null || study.lowerLimit < study.upperLimit,
    {
      path: ['upperLimit'],
      message: 'The upper limit must be above the lower limit.',
      ...whenLimitsRead,
    },
  )
  .refine((study) => study.workingOrder === null || study.workingOrderReason !== '', {
    path: ['workingOrderReason'],
    message: 'Give the reason for the working order, e.g. the protocol that states it.',
  })
  .refine(
    (study) =>
      study.storageTemperatureC === null ||
      study.intermediateTemperatureC === null ||
      study.intermediateTemperatureC > study.storageTemperatureC,
    {
      path: ['intermediateTemperatureC'],
      message: 'The intermediate condition must be warmer than the long-term storage temperature.',
      when: (payload) => temperaturesSchema.safeParse(payload.value).success,
    },
  )
  .refine(
    (study) =>
      study.acceleratedTemperatureC === null ||
      ((study.storageTemperatureC === null || study.acceleratedTemperatureC > study.storageTemperatureC) &&
        (study.intermediateTemperatureC === null ||
          study.acceleratedTemperatureC > study.intermediateTemperatureC)),
    {
      path: ['acceleratedTemperatureC'],
      message:
        'The accelerated condition must be warmer than the long-term storage temperature and the intermediate condition.',
      when: (payload) => temperaturesSchema.safeParse(payload.value).success,
    },
  );

export type StudyFormInput = z.input<typeof studyFormSchema>;
export type StudyInput = z.output<typeof studyFormSchema>;

/** The fields of a study the form edits and the audit trail records, in form order. */
export const STUDY_FIELDS = [
  'title',
  'product',
  'attribute',
  'unit',
  'direction',
  'lowerLimit',
  'upperLimit',
  'storageTemperatureC',
  'storageHumidityPercent',
  'storageCategory',
  'intermediateTemperatureC',
  'acceleratedTemperatureC',
  'acceleratedChange',
  'intermediateChange',
  'littleChange',
  'supportingData',
  'declarationBasis',
  'workingOrder',
  'workingOrderReason',
  'batches',
  'notes',
] as const satisfies readonly (keyof StudyInput)[];

/** Field name → first message, for showing errors beside each field of the form. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const errors: Record<string, string> = {};
  for (const issue of error.issues) {
    const field = String(issue.path[0] ?? 'form');
    errors[field] ??= issue.message;
  }
  return errors;
}

/** A record id in a path (`/studies/:studyId`). */
export const recordIdSchema = z.coerce
  .number({ error: 'The id in the address must be a number.' })
  .int('The id in the address must be a whole number.')
  .positive('The id in the address must be a positive number.')
  .max(2_147_483_647, 'The id in the address is too large.');
