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
 *
 * A study lists its attributes (issue 15 §1). The first is the form's own fields (`attribute`,
 * `unit`, `direction`, the limits, the working order, `censoredRule`, `censoredValue`,
 * `massBalanceRole`); every further attribute is a numbered group of the same fields,
 * `attributes[2][name]`, `attributes[2][unit]`… (the number is the attribute's place in the
 * study; the form posts flat names, `express.urlencoded({ extended: false })`). A group left
 * blank is ignored. Each group is checked with the first attribute's rules, names are unique
 * within the study (case and surrounding spaces ignored), at most one attribute is the assay of
 * the mass balance, and a study lists at most MAX_ATTRIBUTES. The groups arrive as
 * `additionalAttributes` (StudyAttribute[], shared/kinetics/stability/study-attributes.ts); a
 * caller that already holds that list (JSON) may pass it under that name instead.
 */
import { z } from 'zod';
import {
  DECLARED_ANSWERS,
  DECLARED_CHANGES,
  STORAGE_CATEGORIES,
} from '../kinetics/stability/q1e-declaration.ts';
import type { StudyAttribute } from '../kinetics/stability/study-attributes.ts';
import {
  attributeGroupOrBlank,
  attributeRules,
  censoredSchema,
  checkAttributeList,
  collectGroups,
  directionField,
  formFieldOf,
  limitsSchema,
  massBalanceRoleField,
  optionalNumber,
  text,
  workingOrderField,
} from './study-attribute-fields.ts';

export {
  ATTRIBUTE_GROUP_FIELDS,
  attributeFieldName,
  MAX_ATTRIBUTES,
  STUDY_DIRECTIONS,
} from './study-attribute-fields.ts';

export const MAX_BATCHES = 100;

const batchList = z.preprocess(
  (raw) => {
    const items = Array.isArray(raw) ? raw.map(String) : String(raw ?? '').split(/[\n,;]/);
    return [...new Set(items.map((item) => item.trim()).filter((item) => item !== ''))];
  },
  z
    .array(z.string().max(80, 'A batch name can be at most 80 characters.'))
    .max(MAX_BATCHES, `At most ${MAX_BATCHES} batches.`),
);

const temperaturesSchema = z.object({
  storageTemperatureC: optionalNumber('Storage temperature', -273.15, 200),
  intermediateTemperatureC: optionalNumber('Intermediate temperature', -273.15, 200),
  acceleratedTemperatureC: optionalNumber('Accelerated temperature', -273.15, 200),
});

const studyObjectSchema = attributeRules(
  z.object({
    title: text('Title', 200),
    product: text('Product', 200),
    attribute: text('Attribute', 120),
    unit: text('Unit', 60),
    direction: directionField,
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
    ...censoredSchema.shape,
    massBalanceRole: massBalanceRoleField,
    additionalAttributes: z.array(attributeGroupOrBlank).default([]),
    batches: batchList,
    notes: z.string().trim().max(4000, 'Notes can be at most 4000 characters.').default(''),
  }),
)
  .superRefine(checkAttributeList, { when: () => true })
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

export const studyFormSchema = z.preprocess(
  collectGroups,
  studyObjectSchema.transform((study) => ({
    ...study,
    additionalAttributes: study.additionalAttributes.filter(
      (attribute): attribute is StudyAttribute => attribute !== null,
    ),
  })),
);

/** What the form posts (text fields, and the further attributes as `attributes[N][field]`). */
export type StudyFormInput = Record<string, unknown>;
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
  'censoredRule',
  'censoredValue',
  'massBalanceRole',
  'additionalAttributes',
  'batches',
  'notes',
] as const satisfies readonly (keyof StudyInput)[];

/**
 * Field name → first message, for showing errors beside each field of the form; a further
 * attribute's field is named as the form names it (`attributes[3][upperLimit]`).
 */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const errors: Record<string, string> = {};
  for (const issue of error.issues) {
    errors[formFieldOf(issue.path)] ??= issue.message;
  }
  return errors;
}

/** A record id in a path (`/studies/:studyId`). */
export const recordIdSchema = z.coerce
  .number({ error: 'The id in the address must be a number.' })
  .int('The id in the address must be a whole number.')
  .positive('The id in the address must be a positive number.')
  .max(2_147_483_647, 'The id in the address is too large.');
