import type { ConditionShelfLife } from '../../../shared/kinetics/analyse-dataset.ts';
import type { Q1eProposal } from '../../../shared/kinetics/stability/q1e-proposal.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet } from '../../platform/export/workbook-writer.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';

/**
 * The workbook sheet "Shelf-life proposal": per ICH Q1E condition its declared role, the
 * statistical estimate, the extrapolation limit with its rule, section and branch, the proposed
 * shelf life (or why there is none), and every assumption and finding — the record the analysis
 * page shows. Runs recorded before proposals have no rows.
 */

interface ProposalRow {
  condition: ConditionShelfLife;
  proposal: Q1eProposal;
  timeUnit: string;
}

const PROPOSAL_COLUMNS: readonly ExportColumn<ProposalRow>[] = [
  { header: 'Temperature', unit: '°C', type: 'number', value: ({ condition }) => condition.temperatureC },
  { header: 'Role', width: 14, type: 'text', value: ({ condition }) => condition.role },
  {
    header: 'Statistical estimate',
    type: 'number',
    value: ({ condition }) => condition.result?.shelfLife ?? null,
  },
  { header: 'Time unit', type: 'text', value: ({ timeUnit }) => timeUnit },
  {
    header: 'Extrapolation limit',
    unit: 'months',
    type: 'number',
    value: ({ proposal }) => proposal.extrapolationLimit.valueMonths,
  },
  {
    header: 'Proposed shelf life',
    unit: 'months',
    type: 'number',
    value: ({ proposal }) => proposal.proposedShelfLifeMonths,
  },
  {
    header: 'Proposed shelf life, in the time unit',
    type: 'number',
    value: ({ proposal }) => proposal.proposedShelfLife,
  },
  { header: 'Limited by', width: 20, type: 'text', value: ({ proposal }) => proposal.limitedBy },
  { header: 'Rule', width: 36, type: 'text', value: ({ proposal }) => proposal.extrapolationLimit.rule },
  {
    header: 'Section',
    width: 18,
    type: 'text',
    value: ({ proposal }) => proposal.extrapolationLimit.section,
  },
  {
    header: 'Branch',
    width: 60,
    type: 'text',
    value: ({ proposal }) => proposal.extrapolationLimit.branchText,
  },
  {
    header: 'Assumptions',
    width: 60,
    type: 'text',
    value: ({ proposal }) => proposal.extrapolationLimit.assumptions.join(' '),
  },
  {
    header: 'From the data',
    width: 60,
    type: 'text',
    value: ({ proposal }) => proposal.extrapolationLimit.findings.join(' '),
  },
  {
    header: 'Statement or reason',
    width: 90,
    type: 'text',
    value: ({ proposal }) => proposal.proposedReason ?? proposal.statement,
  },
];

function* proposalRows(run: AnalysisRunRecord): Generator<ProposalRow> {
  const { analysis } = run.result;
  for (const condition of analysis.shelfLife ?? []) {
    const proposal = (condition as { proposal?: Q1eProposal }).proposal;
    if (!proposal) continue;
    const timeUnit =
      analysis.series.find((result) => condition.seriesIds.includes(result.id))?.analysis?.timeUnit ?? '';
    yield { condition, proposal, timeUnit };
  }
}

export function proposalSheet(run: AnalysisRunRecord): PlannedSheet {
  return planSheet({ name: 'Shelf-life proposal', columns: PROPOSAL_COLUMNS, rows: () => proposalRows(run) });
}
