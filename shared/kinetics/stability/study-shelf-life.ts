import type { DatasetFindings } from '../dataset-analysis.ts';
import type { StudyAttribute } from './study-attributes.ts';
import type { AttributeShelfLife, StudyShelfLife } from './study-shelf-life-types.ts';

/** One attribute of the study as the run evaluated it: its analysis, or why there is none. */
export interface AttributeOutcome {
  attribute: StudyAttribute;
  /** The attribute's analysis alone (its own criterion and direction); null when not analysed. */
  analysis: Pick<DatasetFindings, 'shelfLife'> | null;
  /** Time unit of the attribute's series (the unit its proposal is expressed in). */
  timeUnit: string;
  /** Why the attribute was not analysed ("no data in this dataset", the engine's refusal); null when it was. */
  notAnalysedReason: string | null;
}

const formatNumber = (value: number) => String(Number(value.toPrecision(4)));
const lowerFirst = (text: string) => `${text.charAt(0).toLowerCase()}${text.slice(1)}`.replace(/[.\s]+$/, '');

function listed(names: readonly string[]): string {
  if (names.length <= 1) return names.join('');
  return `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

/** Whole months as the Q1E proposals say them, with the data's own unit beside when it is another. */
function amount(value: number, months: number, timeUnit: string): string {
  const inMonths = `${months} month${months === 1 ? '' : 's'}`;
  return /^(months?|mo)$/i.test(timeUnit.trim()) || timeUnit.trim() === ''
    ? inMonths
    : `${inMonths} (${formatNumber(value)} ${timeUnit})`;
}

/** The long-term outcome of one attribute: its proposed shelf life, or the reason it proposes none. */
function attributeShelfLife(outcome: AttributeOutcome): AttributeShelfLife {
  const none = (reason: string): AttributeShelfLife => ({
    attribute: outcome.attribute,
    proposedShelfLife: null,
    proposedShelfLifeMonths: null,
    timeUnit: outcome.timeUnit,
    reason,
    statement: `No shelf life is proposed for ${outcome.attribute.name}: ${lowerFirst(reason)}.`,
    limiting: false,
  });
  if (outcome.analysis === null) return none(outcome.notAnalysedReason ?? 'It was not analysed.');
  if (outcome.analysis.shelfLife === null) return none('No acceptance criterion is set for this attribute.');
  const longTerm = outcome.analysis.shelfLife.find((condition) => condition.role === 'long-term');
  if (!longTerm) {
    return none(
      'No series of this attribute is at the long-term condition the study declares (its storage temperature).',
    );
  }
  const proposal = longTerm.proposal;
  if (proposal.proposedShelfLife === null || proposal.proposedShelfLifeMonths === null) {
    const reason = proposal.proposedReason ?? 'The long-term condition proposes none.';
    return { ...none(reason), statement: proposal.statement };
  }
  return {
    attribute: outcome.attribute,
    proposedShelfLife: proposal.proposedShelfLife,
    proposedShelfLifeMonths: proposal.proposedShelfLifeMonths,
    timeUnit: outcome.timeUnit,
    reason: null,
    statement: proposal.statement,
    limiting: false,
  };
}

/**
 * The study's proposed shelf life across its attributes, and the attribute that sets it.
 *
 * Rule (ICH Q1E Appendix A: each attribute is evaluated separately; the shortest estimate governs
 * the product's shelf life): each attribute's proposal is the one its long-term condition
 * makes (`ConditionShelfLife.proposal`, already within the Q1E extrapolation limit of its branch
 * and rounded down to a whole month); the study proposes the minimum, compared in whole months so
 * time units cannot blur a tie. Every attribute at the minimum is limiting (a tie names them all).
 * An attribute that proposes none — not analysed, no data in the dataset, no long-term series, or
 * its own proposal refused — makes the study propose none, with a reason naming it: a shelf life
 * cannot be claimed for a product while one attribute's is unknown (conservative, like every
 * unstated fact of the Q1E decision tree).
 *
 * Throws nothing.
 *
 * Example: Assay proposes 24 months and Impurity B 18 months → 18 months, limiting ["Impurity B"];
 * Assay 18 and Impurity B 18 → 18 months, limiting both; Water with no data → none, reason
 * "Water proposes none: no data in this dataset."
 */
export function studyShelfLife(perAttribute: readonly AttributeOutcome[]): StudyShelfLife {
  const attributes = perAttribute.map(attributeShelfLife);
  const timeUnit = attributes[0]?.timeUnit ?? '';
  const missing = attributes.filter((entry) => entry.proposedShelfLifeMonths === null);
  if (attributes.length === 0 || missing.length > 0) {
    const reason =
      attributes.length === 0
        ? 'The study lists no attribute.'
        : `${missing
            .map((entry) => `${entry.attribute.name} proposes none: ${lowerFirst(entry.reason ?? '')}`)
            .join('; ')}.`;
    const names = listed(missing.map((entry) => entry.attribute.name));
    return {
      attributes,
      limitingAttributes: [],
      proposedShelfLife: null,
      proposedShelfLifeMonths: null,
      timeUnit,
      reason,
      statement:
        attributes.length === 0
          ? 'No shelf life is proposed for the study: it lists no attribute.'
          : `No shelf life is proposed for the study: ${reason.replace(/\.$/, '')}. A product's shelf life cannot be claimed while the shelf life of ${names} is unknown (ICH Q1E Appendix A evaluates every attribute).`,
    };
  }
  const minimum = Math.min(...attributes.map((entry) => entry.proposedShelfLifeMonths as number));
  const marked = attributes.map((entry) => ({
    ...entry,
    limiting: entry.proposedShelfLifeMonths === minimum,
  }));
  const limiting = marked.filter((entry) => entry.limiting);
  const first = limiting[0]!;
  const each = marked
    .map(
      (entry) =>
        `${entry.attribute.name} ${amount(entry.proposedShelfLife as number, entry.proposedShelfLifeMonths as number, entry.timeUnit)}${entry.limiting ? ' (limiting)' : ''}`,
    )
    .join('; ');
  const setBy =
    limiting.length === 1
      ? `set by ${first.attribute.name}`
      : `set equally by ${listed(limiting.map((entry) => entry.attribute.name))}`;
  return {
    attributes: marked,
    limitingAttributes: limiting.map((entry) => entry.attribute.name),
    proposedShelfLife: first.proposedShelfLife,
    proposedShelfLifeMonths: minimum,
    timeUnit: first.timeUnit,
    reason: null,
    statement:
      `The study's proposed shelf life is ${amount(first.proposedShelfLife as number, minimum, first.timeUnit)}, ${setBy}: ` +
      `the earliest of the ${marked.length} attributes, each evaluated separately at the long-term condition (ICH Q1E Appendix A). Each attribute: ${each}.`,
  };
}
