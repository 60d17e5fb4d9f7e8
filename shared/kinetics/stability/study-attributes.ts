import type { AttributeDirection, IntegerOrder, Series } from '../types.ts';

/**
 * The attributes of a stability study: what is measured at every pull (assay, each specified
 * degradation product, total impurities, water...), each with its own unit, direction and
 * acceptance criterion. ICH Q1E Appendix A evaluates each attribute separately and the shortest
 * shelf life among them governs the product's; `study-shelf-life.ts` takes that minimum.
 *
 * A study of one attribute has exactly one entry, made from the study's own columns, so the
 * studies recorded before attributes were listed read unchanged.
 */

/**
 * How results reported below a limit ("<LOQ", "< 0.05") enter the fit:
 * - 'exclude': left out of the fit, shown with their text and the reason "below the reporting limit";
 * - 'stated-value': fitted at the value the study states (`censoredValue`, in the attribute's unit).
 * Either way the rule is printed in the method statement.
 */
export const CENSORED_RULES = ['exclude', 'stated-value'] as const;
export type CensoredRule = (typeof CENSORED_RULES)[number];

/** One attribute of a study, in the study's own terms. */
export interface StudyAttribute {
  /** What is measured, e.g. "Assay" or "Impurity B"; unique within the study (case-insensitive). */
  name: string;
  unit: string;
  direction: AttributeDirection;
  /** Acceptance criterion in `unit`; at least one limit is set. */
  lowerLimit: number | null;
  upperLimit: number | null;
  /** The protocol's working order, used only where the data name none; null for none. */
  workingOrder: IntegerOrder | null;
  workingOrderReason: string;
  censoredRule: CensoredRule;
  /** The value a censored result is fitted at under 'stated-value'; null under 'exclude'. */
  censoredValue: number | null;
  /**
   * Its part in the mass-balance check (assay plus degradation products against the initial
   * value): the assay, a degradation product counted in the total, or no part (null). Mark either
   * each specified degradation product or the total, not both, or a product is counted twice.
   */
  massBalanceRole: MassBalanceRole | null;
}

export const MASS_BALANCE_ROLES = ['assay', 'degradant'] as const;
export type MassBalanceRole = (typeof MASS_BALANCE_ROLES)[number];

/** The columns of a study row that hold its first attribute, and the list of the others. */
export interface StudyAttributeColumns {
  attribute: string;
  unit: string;
  direction: AttributeDirection;
  lowerLimit: number | null;
  upperLimit: number | null;
  workingOrder: number | null;
  workingOrderReason: string;
  censoredRule: CensoredRule;
  censoredValue: number | null;
  massBalanceRole: MassBalanceRole | null;
  /** Every attribute after the first, in the study's order. */
  additionalAttributes: StudyAttribute[];
}

/** The study's attributes in order: the first from the study's columns, then the others. */
export function studyAttributes(study: StudyAttributeColumns): StudyAttribute[] {
  const first: StudyAttribute = {
    name: study.attribute,
    unit: study.unit,
    direction: study.direction,
    lowerLimit: study.lowerLimit,
    upperLimit: study.upperLimit,
    workingOrder: study.workingOrder === null ? null : (study.workingOrder as IntegerOrder),
    workingOrderReason: study.workingOrderReason,
    censoredRule: study.censoredRule,
    censoredValue: study.censoredValue,
    massBalanceRole: study.massBalanceRole,
  };
  return [first, ...study.additionalAttributes];
}

/** Attribute names are matched without regard to case or surrounding spaces. */
export function sameAttributeName(a: string, b: string): boolean {
  return a.trim().toLowerCase() === b.trim().toLowerCase();
}

/**
 * The series of one attribute. A series without `attribute` measures the study's first
 * attribute (datasets imported before attributes were listed, and uploads of one attribute).
 */
export function seriesOfAttribute(
  series: readonly Series[],
  attributes: readonly StudyAttribute[],
  attribute: StudyAttribute,
): Series[] {
  const isFirst = attributes[0] !== undefined && sameAttributeName(attributes[0].name, attribute.name);
  return series.filter((candidate) =>
    candidate.attribute === undefined ? isFirst : sameAttributeName(candidate.attribute, attribute.name),
  );
}
