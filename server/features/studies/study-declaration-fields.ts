/**
 * The Q1E declaration on the study form and the study page: the choices of each select, with
 * what "not stated" means for the proposal, and the declaration in words.
 *
 * The words say the consequence of an unstated answer (the engine takes the most conservative
 * branch), so an analyst who leaves a field blank sees what that costs.
 */
import type {
  DECLARED_ANSWERS,
  DECLARED_CHANGES,
  STORAGE_CATEGORIES,
} from '../../../shared/kinetics/stability/q1e-declaration.ts';

type Values = Record<string, string>;

const STORAGE_LABELS: Record<(typeof STORAGE_CATEGORIES)[number], string> = {
  unknown: 'not stated (no extrapolation)',
  'room-temperature': 'room temperature (ICH Q1E §2.4)',
  refrigerated: 'refrigerated (ICH Q1E §2.5.1)',
  frozen: 'frozen (ICH Q1E §2.5.2)',
};
const CHANGE_LABELS: Record<(typeof DECLARED_CHANGES)[number], string> = {
  unknown: 'not stated (taken as significant)',
  none: 'none, in any attribute',
  significant: 'significant',
};
const ANSWER_LABELS: Record<(typeof DECLARED_ANSWERS)[number], string> = {
  unknown: 'not stated (taken as no)',
  yes: 'yes',
  no: 'no',
};

export interface DeclarationSelect {
  name: string;
  label: string;
  hint: string;
  options: { value: string; label: string; selected: boolean }[];
}

function select(
  name: string,
  label: string,
  hint: string,
  labels: Record<string, string>,
  values: Values,
): DeclarationSelect {
  const current = values[name] || 'unknown';
  return {
    name,
    label,
    hint,
    options: Object.entries(labels).map(([value, text]) => ({
      value,
      label: text,
      selected: value === current,
    })),
  };
}

/** The selects of the declaration, filled from the form values. */
export function declarationSelects(values: Values): DeclarationSelect[] {
  return [
    select(
      'storageCategory',
      'Label storage',
      'Decides which branch of the ICH Q1E decision tree applies.',
      STORAGE_LABELS,
      values,
    ),
    select(
      'acceleratedChange',
      'Significant change at the accelerated condition',
      'In any attribute within 6 months (ICH Q1A(R2) §2.2.7.1 for a drug product, §2.1.7.1 for a drug substance). The data of this attribute can only show one, never its absence.',
      CHANGE_LABELS,
      values,
    ),
    select(
      'intermediateChange',
      'Significant change at the intermediate condition',
      'Consulted when the accelerated condition showed significant change (ICH Q1E §2.4.2).',
      CHANGE_LABELS,
      values,
    ),
    select(
      'littleChange',
      'Little or no change and little or no variability',
      'In the long-term data and the accelerated (or intermediate) data read with them (ICH Q1E §2.4.1.1).',
      ANSWER_LABELS,
      values,
    ),
    select(
      'supportingData',
      'Relevant supporting data',
      'e.g. long-term data of development batches of a closely related formulation (ICH Q1E §2.4.1.2.1).',
      ANSWER_LABELS,
      values,
    ),
  ];
}

/** The declaration in words for the study page: one term and its statement per row. */
export function declarationSummary(study: {
  storageTemperatureC: number | null;
  storageCategory: keyof typeof STORAGE_LABELS;
  intermediateTemperatureC: number | null;
  acceleratedTemperatureC: number | null;
  acceleratedChange: keyof typeof CHANGE_LABELS;
  intermediateChange: keyof typeof CHANGE_LABELS;
  littleChange: keyof typeof ANSWER_LABELS;
  supportingData: keyof typeof ANSWER_LABELS;
  declarationBasis: string;
}): { term: string; statement: string; unstated: boolean }[] {
  const temperature = (value: number | null, empty: string) => (value === null ? empty : `${value} °C`);
  return [
    {
      term: 'Label storage',
      statement: STORAGE_LABELS[study.storageCategory],
      unstated: study.storageCategory === 'unknown',
    },
    {
      term: 'Conditions',
      statement: `long-term ${temperature(study.storageTemperatureC, 'not stated')} · intermediate ${temperature(study.intermediateTemperatureC, 'none declared')} · accelerated ${temperature(study.acceleratedTemperatureC, 'none declared')}`,
      unstated: study.storageTemperatureC === null,
    },
    {
      term: 'Significant change, accelerated',
      statement: CHANGE_LABELS[study.acceleratedChange],
      unstated: study.acceleratedChange === 'unknown',
    },
    {
      term: 'Significant change, intermediate',
      statement: CHANGE_LABELS[study.intermediateChange],
      unstated: study.intermediateChange === 'unknown',
    },
    {
      term: 'Little change and variability',
      statement: ANSWER_LABELS[study.littleChange],
      unstated: study.littleChange === 'unknown',
    },
    {
      term: 'Relevant supporting data',
      statement: ANSWER_LABELS[study.supportingData],
      unstated: study.supportingData === 'unknown',
    },
    ...(study.declarationBasis === ''
      ? []
      : [{ term: 'Basis of these statements', statement: study.declarationBasis, unstated: false }]),
  ];
}
