/**
 * The study form's page model: the values shown (from the study, or as posted), each field with
 * its error, and the attribute groups.
 *
 * The attributes are numbered groups of the same fields, the first being the form's own
 * `attribute`, `unit`, `direction`… and each further one `attributes[N][field]`
 * (shared/api/study-attribute-fields.ts). Without JavaScript, "Add another attribute" and each
 * "Remove" are submit buttons: the form comes back with one more empty group, or one fewer, and
 * everything typed kept (`regroupedValues`); nothing is saved until the save button.
 */
import type { Request } from 'express';
import {
  ATTRIBUTE_GROUP_FIELDS,
  attributeFieldName,
  MAX_ATTRIBUTES,
  STUDY_DIRECTIONS,
} from '../../../shared/api/studies.ts';
import type { StudyAttribute } from '../../../shared/kinetics/stability/study-attributes.ts';
import type { Study } from './studies.ts';
import { declarationSelects } from './study-declaration-fields.ts';

export type FormValues = Record<string, string>;

type GroupValues = Partial<Record<keyof StudyAttribute, string>>;

const number = (value: number | null) => (value === null ? '' : String(value));

function groupValuesOf(attribute: StudyAttribute): GroupValues {
  return {
    name: attribute.name,
    unit: attribute.unit,
    direction: attribute.direction,
    lowerLimit: number(attribute.lowerLimit),
    upperLimit: number(attribute.upperLimit),
    workingOrder: attribute.workingOrder === null ? '' : String(attribute.workingOrder),
    workingOrderReason: attribute.workingOrderReason,
    censoredRule: attribute.censoredRule,
    censoredValue: number(attribute.censoredValue),
    massBalanceRole: attribute.massBalanceRole ?? '',
  };
}

/** The groups held in flat form values: position 1 from the form's own fields, then the rest. */
function groupsOf(values: FormValues): GroupValues[] {
  let count = 1;
  for (const key of Object.keys(values)) {
    const position = Number(/^attributes\[(\d{1,3})\]\[/.exec(key)?.[1]);
    if (position > count) count = position;
  }
  return Array.from({ length: Math.min(count, 100) }, (_, index) =>
    Object.fromEntries(
      ATTRIBUTE_GROUP_FIELDS.map((field) => [field, values[attributeFieldName(index + 1, field)] ?? '']),
    ),
  );
}

/** Flat form values with the attribute groups replaced by `groups`. */
function withGroups(values: FormValues, groups: GroupValues[]): FormValues {
  const rest = Object.fromEntries(
    Object.entries(values).filter(
      ([key]) =>
        !key.startsWith('attributes[') &&
        !ATTRIBUTE_GROUP_FIELDS.some((field) => attributeFieldName(1, field) === key),
    ),
  );
  const grouped = groups.flatMap((group, index) =>
    ATTRIBUTE_GROUP_FIELDS.map((field) => [attributeFieldName(index + 1, field), group[field] ?? '']),
  );
  return { ...rest, ...Object.fromEntries(grouped) };
}

export function formValuesOf(study: Study): FormValues {
  const first = groupValuesOf({
    name: study.attribute,
    unit: study.unit,
    direction: study.direction,
    lowerLimit: study.lowerLimit,
    upperLimit: study.upperLimit,
    workingOrder: study.workingOrder as StudyAttribute['workingOrder'],
    workingOrderReason: study.workingOrderReason,
    censoredRule: study.censoredRule,
    censoredValue: study.censoredValue,
    massBalanceRole: study.massBalanceRole,
  });
  return withGroups(
    {
      title: study.title,
      product: study.product,
      storageTemperatureC: number(study.storageTemperatureC),
      storageHumidityPercent: number(study.storageHumidityPercent),
      storageCategory: study.storageCategory,
      intermediateTemperatureC: number(study.intermediateTemperatureC),
      acceleratedTemperatureC: number(study.acceleratedTemperatureC),
      acceleratedChange: study.acceleratedChange,
      intermediateChange: study.intermediateChange,
      littleChange: study.littleChange,
      supportingData: study.supportingData,
      declarationBasis: study.declarationBasis,
      batches: study.batches.join('\n'),
      notes: study.notes,
    },
    [first, ...study.additionalAttributes.map(groupValuesOf)],
  );
}

export function postedValues(req: Request): FormValues {
  const body = (req.body ?? {}) as Record<string, unknown>;
  return Object.fromEntries(
    Object.entries(body).map(([key, value]) => [key, typeof value === 'string' ? value : '']),
  );
}

/** What an "Add another attribute" or "Remove" button asks for, read from `formAction`. */
export type GroupAction = { kind: 'add' } | { kind: 'remove'; position: number };

export function groupAction(req: Request): GroupAction | null {
  const action = (req.body as Record<string, unknown> | undefined)?.formAction;
  if (action === 'add-attribute') return { kind: 'add' };
  const position =
    typeof action === 'string' ? Number(/^remove-attribute-(\d{1,3})$/.exec(action)?.[1]) : NaN;
  return Number.isInteger(position) && position >= 1 ? { kind: 'remove', position } : null;
}

/**
 * The posted values after the button's action, with the sentence that says what happened and
 * where focus goes (the new group's name, or that sentence).
 */
export function regroupedValues(values: FormValues, action: GroupAction) {
  const groups = groupsOf(values);
  if (action.kind === 'add') {
    if (groups.length >= MAX_ATTRIBUTES) {
      return {
        values,
        notice: `A study lists at most ${MAX_ATTRIBUTES} attributes: nothing was added.`,
        focus: 'notice',
      };
    }
    return {
      values: withGroups(values, [...groups, { direction: 'decreasing', censoredRule: 'exclude' }]),
      notice: `Attribute ${groups.length + 1} was added to the form. Nothing is saved until you save the study.`,
      focus: attributeFieldName(groups.length + 1, 'name'),
    };
  }
  if (groups.length < 2 || action.position > groups.length) {
    return { values, notice: 'A study lists at least one attribute: nothing was removed.', focus: 'notice' };
  }
  const removed = groups[action.position - 1]!;
  const named = removed.name?.trim() ? ` (${removed.name.trim()})` : '';
  return {
    values: withGroups(
      values,
      groups.filter((_, index) => index !== action.position - 1),
    ),
    notice: `Attribute ${action.position}${named} was removed from the form; the attributes after it moved up. Nothing is saved until you save the study.`,
    focus: 'notice',
  };
}

interface FieldSpec {
  name: string;
  label: string;
  hint: string;
  wide?: boolean;
  decimal?: boolean;
}

const STUDY_FIELDS: FieldSpec[] = [
  {
    name: 'title',
    label: 'Title',
    hint: 'e.g. Long-term and accelerated stability, 2025 campaign',
    wide: true,
  },
  { name: 'product', label: 'Product', hint: 'Product name and strength', wide: true },
];

const FIELD_GROUPS: Record<'storage' | 'roles', FieldSpec[]> = {
  storage: [
    { name: 'storageTemperatureC', label: 'Temperature (°C)', hint: 'e.g. 25', decimal: true },
    {
      name: 'storageHumidityPercent',
      label: 'Relative humidity (%)',
      hint: 'e.g. 60; blank when not controlled',
      decimal: true,
    },
  ],
  roles: [
    {
      name: 'intermediateTemperatureC',
      label: 'Intermediate condition (°C)',
      hint: 'e.g. 30; blank when the study has none',
      decimal: true,
    },
    {
      name: 'acceleratedTemperatureC',
      label: 'Accelerated condition (°C)',
      hint: 'e.g. 40 for room temperature, 25 for a refrigerated product',
      decimal: true,
    },
  ],
};

type Option = { value: string; label: string };

const ATTRIBUTE_FIELD_SPECS: (FieldSpec & { field: keyof StudyAttribute; options?: Option[] })[] = [
  { field: 'name', name: 'name', label: 'Attribute measured', hint: 'e.g. Assay, Impurity B, Water' },
  { field: 'unit', name: 'unit', label: 'Unit', hint: 'e.g. % of label claim, % area, mg/mL' },
  {
    field: 'direction',
    name: 'direction',
    label: 'Direction on storage',
    hint: 'Decreasing for an assay, increasing for a degradation product.',
    options: STUDY_DIRECTIONS.map((direction) => ({ value: direction, label: direction })),
  },
  {
    field: 'lowerLimit',
    name: 'lowerLimit',
    label: 'Lower limit',
    hint: 'In the unit above; blank for none',
    decimal: true,
  },
  {
    field: 'upperLimit',
    name: 'upperLimit',
    label: 'Upper limit',
    hint: 'In the unit above; blank for none',
    decimal: true,
  },
  {
    field: 'workingOrder',
    name: 'workingOrder',
    label: 'Working order',
    hint: 'Blank: no working order.',
    options: [
      { value: '', label: 'None: only what the data name' },
      { value: '0', label: 'Zero order' },
      { value: '1', label: 'First order' },
      { value: '2', label: 'Second order' },
    ],
  },
  {
    field: 'workingOrderReason',
    name: 'workingOrderReason',
    label: 'Reason for the working order',
    hint: 'e.g. protocol STB-12 §4 states first-order loss',
  },
  {
    field: 'censoredRule',
    name: 'censoredRule',
    label: 'Results below the limit ("<LOQ", "< 0.05")',
    hint: 'Such a result is kept and shown with its text; the rule is printed in the method statement.',
    options: [
      { value: 'exclude', label: 'Excluded from the fit' },
      { value: 'stated-value', label: 'Fitted at a stated value' },
    ],
  },
  {
    field: 'censoredValue',
    name: 'censoredValue',
    label: 'Stated value',
    hint: 'In the unit above, e.g. half the reporting limit; only when fitted at a stated value',
    decimal: true,
  },
  {
    field: 'massBalanceRole',
    name: 'massBalanceRole',
    label: 'Part in the mass balance',
    hint: 'Assay plus the degradation products against the initial value. Mark each specified product or the total impurities, not both.',
    options: [
      { value: '', label: 'No part' },
      { value: 'assay', label: 'The assay' },
      { value: 'degradant', label: 'A degradation product (counted in the total)' },
    ],
  },
];

/** One group's fields, named and identified so that every error is tied to its own field. */
function attributeGroup(
  values: FormValues,
  errors: Record<string, string>,
  position: number,
  count: number,
  focus: string | undefined,
) {
  return {
    position,
    legend: `Attribute ${position}`,
    removable: count > 1,
    fields: ATTRIBUTE_FIELD_SPECS.map((spec) => {
      const name = attributeFieldName(position, spec.field);
      const base = position === 1 ? name : `attributes-${position}-${spec.field}`;
      const value = values[name] ?? '';
      return {
        ...spec,
        name,
        inputId: `study-${base}`,
        errorId: `${base}-error`,
        hintId: `${base}-hint`,
        labelSuffix: position === 1 ? '' : ` (attribute ${position})`,
        value,
        error: errors[name],
        autofocus: focus === name,
        options: spec.options?.map((option) => ({ ...option, selected: option.value === value })),
      };
    }),
  };
}

export function formLocals(
  values: FormValues,
  errors: Record<string, string>,
  action: string,
  study?: Study,
  regrouped?: { notice: string; focus: string },
) {
  const fill = (specs: FieldSpec[]) =>
    specs.map((spec) => ({ ...spec, value: values[spec.name] ?? '', error: errors[spec.name] }));
  const count = groupsOf(values).length;
  return {
    fields: {
      study: fill(STUDY_FIELDS),
      storage: fill(FIELD_GROUPS.storage),
      roles: fill(FIELD_GROUPS.roles),
    },
    attributeGroups: Array.from({ length: count }, (_, index) =>
      attributeGroup(values, errors, index + 1, count, regrouped?.focus),
    ),
    canAddAttribute: count < MAX_ATTRIBUTES,
    maxAttributes: MAX_ATTRIBUTES,
    groupNotice: regrouped?.notice ?? '',
    focusNotice: regrouped?.focus === 'notice',
    declaration: declarationSelects(values).map((entry) => ({ ...entry, error: errors[entry.name] })),
    title: study ? `Edit ${study.title}` : 'New study',
    heading: study ? 'Edit study' : 'New study',
    action,
    study,
    values,
    errors,
    errorCount: Object.keys(errors).length,
  };
}
