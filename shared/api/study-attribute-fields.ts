/**
 * The fields of a study's attributes on the study form (issue 15 §1), shared by the first
 * attribute (the form's own fields) and every further one (`attributes[N][field]`): numbers read
 * from text, the acceptance criterion, the working order, the censored-value rule and the
 * mass-balance role, each with the same rules and messages. `studies.ts` builds the form's schema
 * from these.
 */
import { z } from 'zod';
import {
  CENSORED_RULES,
  MASS_BALANCE_ROLES,
  type StudyAttribute,
  sameAttributeName,
} from '../kinetics/stability/study-attributes.ts';

export const STUDY_DIRECTIONS = ['decreasing', 'increasing', 'either'] as const;
/** The most attributes one study lists (the first and up to 19 more). */
export const MAX_ATTRIBUTES = 20;

export function optionalNumber(label: string, minimum: number, maximum: number) {
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

export const text = (label: string, max: number) =>
  z
    .string({ error: `${label} is required.` })
    .trim()
    .min(1, `${label} is required.`)
    .max(max, `${label} can be at most ${max} characters.`);

export const limitsSchema = z.object({
  lowerLimit: optionalNumber('Lower limit', -1e12, 1e12),
  upperLimit: optionalNumber('Upper limit', -1e12, 1e12),
});

/**
 * The study's working order (issue 12 §3): blank for none, else 0, 1 or 2. The analysis uses it
 * only where the data do not name an order, and says so ("working order from the study").
 */
export const workingOrderField = z.preprocess(
  (raw) =>
    raw === undefined || raw === null || String(raw).trim() === '' ? null : Number(String(raw).trim()),
  z
    .union([z.literal(0), z.literal(1), z.literal(2)], { error: 'Choose none, zero, first or second order.' })
    .nullable(),
);

/** Run the criterion checks whenever both limits read as numbers, even if other fields failed. */
export const whenLimitsRead = {
  when: (payload: { value: unknown }) => limitsSchema.safeParse(payload.value).success,
};

export const directionField = z.enum(STUDY_DIRECTIONS, { error: 'Choose decreasing, increasing or either.' });

/** How results reported below a limit ("<LOQ") enter the fit; the form's select always posts one. */
const censoredRuleField = z
  .enum(CENSORED_RULES, { error: 'Choose excluded from the fit or fitted at a stated value.' })
  .default('exclude');

/** Blank (the select's "no part") is null. */
export const massBalanceRoleField = z.preprocess(
  (raw) => (raw === undefined || raw === null || String(raw).trim() === '' ? null : raw),
  z.enum(MASS_BALANCE_ROLES, { error: 'Choose no part, the assay or a degradation product.' }).nullable(),
);

export const censoredSchema = z.object({
  censoredRule: censoredRuleField,
  censoredValue: optionalNumber('The stated value', -1e12, 1e12),
});
const whenCensoredRead = {
  when: (payload: { value: unknown }) => censoredSchema.safeParse(payload.value).success,
};
const CENSORED_VALUE_MISSING =
  "Give the value a result below the limit is fitted at, in the attribute's unit, or choose to exclude such results.";
const CENSORED_VALUE_UNUSED =
  'Leave the stated value blank when results below the limit are excluded, or choose to fit them at a stated value.';

const workingOrderSchema = z.object({
  workingOrder: workingOrderField,
  workingOrderReason: z.string().trim().default(''),
});

/** The rules every attribute meets, the first and each group alike; paths are the field names. */
export function attributeRules<
  T extends z.ZodType<{
    lowerLimit: number | null;
    upperLimit: number | null;
    workingOrder: number | null;
    workingOrderReason: string;
    censoredRule: string;
    censoredValue: number | null;
  }>,
>(schema: T): T {
  return schema
    .refine((attribute) => attribute.lowerLimit !== null || attribute.upperLimit !== null, {
      path: ['lowerLimit'],
      message: 'Give a lower limit, an upper limit or both: the acceptance criterion needs at least one.',
      ...whenLimitsRead,
    })
    .refine(
      (attribute) =>
        attribute.lowerLimit === null ||
        attribute.upperLimit === null ||
        attribute.lowerLimit < attribute.upperLimit,
      { path: ['upperLimit'], message: 'The upper limit must be above the lower limit.', ...whenLimitsRead },
    )
    .refine((attribute) => attribute.workingOrder === null || attribute.workingOrderReason !== '', {
      path: ['workingOrderReason'],
      message: 'Give the reason for the working order, e.g. the protocol that states it.',
      when: (payload) => workingOrderSchema.safeParse(payload.value).success,
    })
    .refine((attribute) => attribute.censoredRule !== 'stated-value' || attribute.censoredValue !== null, {
      path: ['censoredValue'],
      message: CENSORED_VALUE_MISSING,
      ...whenCensoredRead,
    })
    .refine((attribute) => attribute.censoredRule !== 'exclude' || attribute.censoredValue === null, {
      path: ['censoredValue'],
      message: CENSORED_VALUE_UNUSED,
      ...whenCensoredRead,
    });
}

/** One further attribute, in StudyAttribute's field order. */
export const attributeGroupSchema = attributeRules(
  z.object({
    name: text('Attribute', 120),
    unit: text('Unit', 60),
    direction: directionField,
    ...limitsSchema.shape,
    workingOrder: workingOrderField,
    workingOrderReason: z.string().trim().max(1000, 'The reason can be at most 1000 characters.').default(''),
    ...censoredSchema.shape,
    massBalanceRole: massBalanceRoleField,
  }),
) satisfies z.ZodType<StudyAttribute>;

/** The fields of a further attribute's group, as named in `attributes[N][field]`. */
export const ATTRIBUTE_GROUP_FIELDS = Object.keys(attributeGroupSchema.shape) as (keyof StudyAttribute)[];

/** A group with nothing typed and no choice away from its defaults is no attribute. */
function blankGroup(group: unknown): boolean {
  if (group === undefined || group === null) return true;
  if (typeof group !== 'object') return false;
  const fields = group as Record<string, unknown>;
  const typed = (field: string) => fields[field] !== undefined && String(fields[field]).trim() !== '';
  return (
    ['name', 'unit', 'lowerLimit', 'upperLimit', 'workingOrder', 'workingOrderReason', 'censoredValue'].every(
      (field) => !typed(field),
    ) &&
    !typed('massBalanceRole') &&
    (fields.censoredRule === undefined || fields.censoredRule === 'exclude')
  );
}

/** A blank group reads as null and keeps its place, so each error names the group's own field. */
export const attributeGroupOrBlank = z.preprocess(
  (raw) => (blankGroup(raw) ? null : raw),
  attributeGroupSchema.nullable(),
);

const GROUP_KEY = /^attributes\[(\d{1,3})\]\[([A-Za-z]+)\]$/;

/** `attributes[N][field]` keys → `additionalAttributes[N - 2]`; a posted list is taken as it is. */
export function collectGroups(raw: unknown): unknown {
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return raw;
  const body = raw as Record<string, unknown>;
  if (Array.isArray(body.additionalAttributes)) return body;
  const groups: Record<string, unknown>[] = [];
  for (const [key, value] of Object.entries(body)) {
    const match = GROUP_KEY.exec(key);
    const position = Number(match?.[1]);
    if (!match || position < 2) continue;
    groups[position - 2] ??= {};
    groups[position - 2]![match[2]!] = value;
  }
  return { ...body, additionalAttributes: Array.from(groups, (group) => group ?? null) };
}

/** The field name of the form that a path of the schema points at. */
export function formFieldOf(path: readonly PropertyKey[]): string {
  if (path[0] === 'additionalAttributes' && typeof path[1] === 'number' && path[2] !== undefined) {
    return attributeFieldName(path[1] + 2, String(path[2]));
  }
  if (path[0] === 'additionalAttributes') return 'attributes';
  return String(path[0] ?? 'form');
}

/** The form's name of a field of the attribute at `position` (1 = the study's own fields). */
export function attributeFieldName(position: number, field: string): string {
  if (position === 1) return field === 'name' ? 'attribute' : field;
  return `attributes[${position}][${field}]`;
}

/**
 * Names unique within the study, at most one assay of the mass balance, at most MAX_ATTRIBUTES.
 * Runs whatever else failed, reading only what parsed, so every error shows at once.
 */
export function checkAttributeList(value: unknown, ctx: z.RefinementCtx): void {
  const study = value as { attribute?: unknown; massBalanceRole?: unknown; additionalAttributes?: unknown };
  const groups = Array.isArray(study.additionalAttributes) ? (study.additionalAttributes as unknown[]) : [];
  const entries = [
    { path: [] as (string | number)[], name: study.attribute, role: study.massBalanceRole },
    ...groups.map((group, index) => {
      const fields = (group ?? {}) as { name?: unknown; massBalanceRole?: unknown };
      return group === null
        ? null
        : { path: ['additionalAttributes', index], name: fields.name, role: fields.massBalanceRole };
    }),
  ].filter((entry) => entry !== null);
  const nameField = (entry: (typeof entries)[number]) =>
    entry.path.length === 0 ? ['attribute'] : [...entry.path, 'name'];
  entries.forEach((entry, index) => {
    const earlier = entries.slice(0, index);
    const name = typeof entry.name === 'string' ? entry.name : '';
    if (
      name.trim() !== '' &&
      earlier.some((other) => typeof other.name === 'string' && sameAttributeName(other.name, name))
    ) {
      ctx.addIssue({
        code: 'custom',
        path: nameField(entry),
        message: `The study already lists an attribute named “${name.trim()}”: give each attribute its own name.`,
      });
    }
    if (entry.role === 'assay' && earlier.some((other) => other.role === 'assay')) {
      ctx.addIssue({
        code: 'custom',
        path: [...entry.path, 'massBalanceRole'],
        message:
          'Only one attribute can be the assay of the mass balance: choose no part or a degradation product.',
      });
    }
  });
  if (entries.length > MAX_ATTRIBUTES) {
    ctx.addIssue({
      code: 'custom',
      path: ['additionalAttributes'],
      message: `A study can list at most ${MAX_ATTRIBUTES} attributes: leave the others blank.`,
    });
  }
}
