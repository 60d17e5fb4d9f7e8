/**
 * A study's attributes as the study page and the list of studies show them: one table row per
 * attribute, all alike (the first is not set apart: which one a study lists first is only where
 * its values are kept), and a short line naming them.
 */
import {
  type StudyAttribute,
  type StudyAttributeColumns,
  studyAttributes,
} from '../../../shared/kinetics/stability/study-attributes.ts';
import { criterionText } from './study-attribute-changes.ts';

const ORDER_NAMES = ['zero', 'first', 'second'] as const;

const CENSORED_RULE_TEXT = {
  exclude: 'excluded from the fit',
  'stated-value': 'fitted at',
} as const;

const ROLE_TEXT = { assay: 'assay', degradant: 'degradation product' } as const;

function row(attribute: StudyAttribute) {
  return {
    name: attribute.name,
    unit: attribute.unit,
    direction: attribute.direction,
    criterion: criterionText(attribute.lowerLimit, attribute.upperLimit, attribute.unit),
    workingOrder:
      attribute.workingOrder === null
        ? 'none: only what the data name'
        : `${ORDER_NAMES[attribute.workingOrder]} order — ${attribute.workingOrderReason}`,
    censoredRule:
      attribute.censoredRule === 'stated-value'
        ? `${CENSORED_RULE_TEXT['stated-value']} ${attribute.censoredValue} ${attribute.unit}`
        : CENSORED_RULE_TEXT.exclude,
    massBalanceRole: attribute.massBalanceRole === null ? 'none' : ROLE_TEXT[attribute.massBalanceRole],
  };
}

/** The study page's table of attributes and the line under its title. */
export function studyPageAttributes(study: StudyAttributeColumns) {
  const attributes = studyAttributes(study);
  return {
    attributes: attributes.map(row),
    attributesLine:
      attributes.length === 1
        ? `${attributes[0]!.name} (${attributes[0]!.unit})`
        : `${attributes.length} attributes: ${attributes.map((attribute) => attribute.name).join(', ')}`,
  };
}

/** The list of studies: every attribute's name, and each one's criterion (named when several). */
export function listedAttributes(study: {
  attribute: string;
  unit: string;
  lowerLimit: number | null;
  upperLimit: number | null;
  additionalAttributes: StudyAttribute[];
}) {
  const first = { name: study.attribute, ...study };
  const all = [first, ...study.additionalAttributes];
  const criterion = (attribute: (typeof all)[number]) =>
    criterionText(attribute.lowerLimit, attribute.upperLimit, attribute.unit);
  return {
    attributeNames: all.map((attribute) => attribute.name).join(', '),
    criterion:
      all.length === 1
        ? criterion(first)
        : all.map((attribute) => `${attribute.name}: ${criterion(attribute)}`).join('; '),
  };
}
