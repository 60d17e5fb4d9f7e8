import type { ConditionShelfLife } from './condition-shelf-lives.ts';
import type { DeclaredAnswer, DeclaredChange, Q1eDeclaration, StorageCategory } from './q1e-declaration.ts';

const STORAGE_WORDS: Record<StorageCategory, string> = {
  unknown: 'not stated',
  'room-temperature': 'room temperature',
  refrigerated: 'refrigerated',
  frozen: 'frozen',
};
const CHANGE_WORDS: Record<DeclaredChange, string> = {
  unknown: 'not stated',
  none: 'none',
  significant: 'significant',
};
const ANSWER_WORDS: Record<DeclaredAnswer, string> = { unknown: 'not stated', yes: 'yes', no: 'no' };
const temperature = (value: number | null) => (value === null ? 'not declared' : `${value} °C`);

/** The declaration in one sentence, in the order the study form asks for it. */
export function declarationText(declaration: Q1eDeclaration): string {
  return (
    `Declared by the study: storage ${STORAGE_WORDS[declaration.storage]}; long-term ${temperature(declaration.longTermTemperatureC)}, ` +
    `intermediate ${temperature(declaration.intermediateTemperatureC)}, accelerated ${temperature(declaration.acceleratedTemperatureC)}; ` +
    `significant change at accelerated ${CHANGE_WORDS[declaration.acceleratedChange]}, at intermediate ${CHANGE_WORDS[declaration.intermediateChange]}; ` +
    `little change and variability ${ANSWER_WORDS[declaration.littleChange]}; relevant supporting data ${ANSWER_WORDS[declaration.supportingData]}.`
  );
}

/**
 * The shelf-life proposal paragraph of the method statement: what the study declared, the rule,
 * and per condition the outcome, the decision-tree branch with its section, every assumption,
 * what the data showed and what the guideline adds.
 *
 * Why: ICH Q1E §2.2 asks that the procedure and the assumptions behind it be stated; an
 * assumption a reviewer cannot see is one they cannot challenge.
 *
 * Throws nothing.
 *
 * Example: nothing declared but the storage temperature gives a paragraph that names the
 * assumption "Storage category … not stated: no extrapolation, the most conservative branch".
 */
export function q1eProposalText(
  declaration: Q1eDeclaration,
  conditions: readonly ConditionShelfLife[],
): string {
  const parts = [
    declarationText(declaration),
    'Every fact the study leaves unstated takes the most conservative branch of the ICH Q1E Appendix A decision tree (§2.4 room temperature, §2.5.1 refrigerated, §2.5.2 frozen), named below as an assumption; the data of the attribute analysed can show a significant change (ICH Q1A(R2) §2.2.7.1, §2.1.7.1), never its absence.',
    'The proposed shelf life is the smaller of the statistical estimate and the extrapolation limit, rounded down to a whole month (never rounded up); only the long-term condition proposes one.',
  ];
  const others: string[] = [];
  for (const condition of conditions) {
    const where = condition.temperatureC === null ? 'All series' : `${condition.temperatureC} °C`;
    const proposal = condition.proposal as ConditionShelfLife['proposal'] | undefined;
    if (!proposal) continue;
    if (condition.role !== 'long-term') {
      others.push(`${where} (${condition.role === 'not-declared' ? 'not declared' : condition.role})`);
      continue;
    }
    const limit = proposal.extrapolationLimit;
    parts.push(
      `${where} (long-term): ${proposal.statement}`,
      limit.branchText === '' ? '' : `Branch: ${limit.branchText} (${limit.section ?? 'ICH Q1E'}).`,
      ...limit.findings,
      limit.assumptions.length === 0 ? 'Assumptions: none.' : `Assumptions: ${limit.assumptions.join(' ')}`,
      ...limit.notes,
    );
  }
  if (others.length > 0) {
    parts.push(
      `${others.join(', ')}: no shelf life proposed from ${others.length === 1 ? 'this condition; its statistical estimate is' : 'these conditions; their statistical estimates are'} for information.`,
    );
  }
  return parts.filter((part) => part !== '').join(' ');
}
