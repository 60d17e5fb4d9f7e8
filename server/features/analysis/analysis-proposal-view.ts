import { formatSignificant } from '../../../shared/figures/significant-figures.ts';
import type { ConditionShelfLife } from '../../../shared/kinetics/analyse-dataset.ts';
import type { Q1eProposal } from '../../../shared/kinetics/stability/q1e-proposal.ts';
import { readableNumbers } from './analysis-verdict.ts';

/**
 * The proposed shelf life of one condition as the analysis page shows it: the proposal in whole
 * months (and in the data's unit when that is not months), the extrapolation limit with its rule,
 * the decision-tree branch and section, and every assumption, finding and note — or why there is
 * no proposal. Runs recorded before proposals existed carry none; they say so instead of failing.
 */
export interface ProposalView {
  recorded: boolean;
  role: string;
  isLongTerm: boolean;
  proposed: string;
  proposedValue: string;
  reason: string;
  statement: string;
  limit: string;
  rule: string;
  branch: string;
  section: string;
  exceeds: boolean;
  assumptions: string[];
  findings: string[];
  notes: string[];
}

const ROLE_WORDS: Record<string, string> = {
  'long-term': 'long-term',
  intermediate: 'intermediate',
  accelerated: 'accelerated',
  'not-declared': 'not declared',
};

function months(value: number): string {
  return `${value} month${value === 1 ? '' : 's'}`;
}

function inUnit(value: number | null, valueMonths: number | null, timeUnit: string): string {
  if (value === null || valueMonths === null) return '—';
  const monthsText = months(Number(valueMonths.toPrecision(6)));
  return timeUnit === 'month' || timeUnit === ''
    ? monthsText
    : `${monthsText} (${formatSignificant(value, 4)} ${timeUnit})`;
}

export function proposalView(condition: ConditionShelfLife, timeUnit: string): ProposalView {
  const proposal = (condition as { proposal?: Q1eProposal }).proposal;
  if (!proposal) {
    return {
      recorded: false,
      role: '',
      isLongTerm: false,
      proposed: '—',
      proposedValue: '',
      reason:
        'This run was recorded before shelf-life proposals under the ICH Q1E extrapolation limit; run the analysis again for one.',
      statement: '',
      limit: '—',
      rule: '',
      branch: '',
      section: '',
      exceeds: false,
      assumptions: [],
      findings: [],
      notes: [],
    };
  }
  const limit = proposal.extrapolationLimit;
  return {
    recorded: true,
    role: ROLE_WORDS[condition.role] ?? condition.role,
    isLongTerm: condition.role === 'long-term',
    proposed:
      proposal.proposedShelfLifeMonths === null
        ? '—'
        : inUnit(proposal.proposedShelfLife, proposal.proposedShelfLifeMonths, timeUnit),
    proposedValue: proposal.proposedShelfLife === null ? '' : String(proposal.proposedShelfLife),
    reason: readableNumbers(proposal.proposedReason ?? ''),
    statement: readableNumbers(proposal.statement),
    limit: inUnit(limit.value, limit.valueMonths, timeUnit),
    rule: limit.rule,
    branch: limit.branchText,
    section: limit.section ?? '',
    exceeds: proposal.estimateExceedsLimit === true,
    assumptions: limit.assumptions,
    findings: limit.findings.map(readableNumbers),
    notes: limit.notes,
  };
}
