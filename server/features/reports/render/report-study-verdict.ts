import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import type { StudyAttribute } from '../../../../shared/kinetics/stability/study-attributes.ts';
import type {
  AttributeShelfLife,
  MassBalance,
  StudyShelfLife,
} from '../../../../shared/kinetics/stability/study-shelf-life-types.ts';
import { criterionText, shelfLifeSummaries } from './report-context-summaries.ts';
import { interval, significant } from './template-format.ts';
import type { ReportTable } from './template-helpers.ts';

/**
 * The study's verdict in a report context: `studyShelfLife` (the proposed shelf life, the
 * limiting attributes and one row per attribute, ICH Q1E Appendix A) and `massBalance` (a table
 * per batch and condition with the trend, and one of every pull). A run of one attribute gets a
 * `studyShelfLife` built from its one attribute's long-term proposal; a run of several prints
 * the verdict the run stored. Nothing is estimated here.
 *
 * Throws nothing.
 *
 * Example: a stored verdict limited by "Impurity B" at 28 months gives proposed "28 months" and
 * limitingText "Impurity B".
 */

const months = (value: number | null) => (value === null ? null : `${value} month${value === 1 ? '' : 's'}`);

/** A shelf life in words: whole months when it has them, else in the data's time unit. */
export function shelfLifeText(entry: {
  proposedShelfLifeMonths: number | null;
  proposedShelfLife: number | null;
  timeUnit: string;
}): string | null {
  if (entry.proposedShelfLifeMonths !== null) return months(entry.proposedShelfLifeMonths);
  return entry.proposedShelfLife === null ? null : significant(entry.proposedShelfLife, 3, entry.timeUnit);
}

/** "Assay", "Assay and Impurity B", "Assay, Impurity A and Impurity B". */
export function namesInWords(names: readonly string[]): string {
  if (names.length <= 1) return names[0] ?? '';
  return `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

/** The one attribute's outcome, as the study verdict of a multi-attribute run would list it. */
export function oneAttributeOutcome(
  attribute: StudyAttribute,
  analysis: DatasetAnalysis,
  storageTemperatureC: number | null,
): AttributeShelfLife {
  const proposal = shelfLifeSummaries(analysis, storageTemperatureC).find(
    (entry) => entry.isLongTermCondition,
  );
  if (!proposal)
    return {
      attribute,
      proposedShelfLife: null,
      proposedShelfLifeMonths: null,
      timeUnit: analysis.series.find((entry) => entry.analysis)?.analysis?.timeUnit ?? '',
      reason: 'the analysis has no long-term condition with an ICH Q1E shelf-life proposal',
      statement: 'No shelf-life proposal: the analysis declares no long-term condition.',
      limiting: false,
    };
  return {
    attribute,
    proposedShelfLife: proposal.proposedShelfLife,
    proposedShelfLifeMonths: proposal.proposedShelfLifeMonths,
    timeUnit: proposal.timeUnit,
    reason: proposal.proposedShelfLife === null ? (proposal.proposedReason ?? proposal.reason) : null,
    statement: proposal.statement,
    limiting: proposal.proposedShelfLife !== null,
  };
}

export function studyShelfLifeOfOne(outcome: AttributeShelfLife): StudyShelfLife {
  const proposed = shelfLifeText(outcome);
  return {
    attributes: [outcome],
    limitingAttributes: outcome.limiting ? [outcome.attribute.name] : [],
    proposedShelfLife: outcome.proposedShelfLife,
    proposedShelfLifeMonths: outcome.proposedShelfLifeMonths,
    timeUnit: outcome.timeUnit,
    reason: outcome.reason,
    statement:
      proposed === null
        ? `No shelf life is proposed: ${outcome.reason ?? 'no proposal'}.`
        : `Proposed shelf life: ${proposed}, set by ${outcome.attribute.name}.`,
  };
}

/** The verdict of a run of several attributes that stored none: no shelf life, and why. */
export function noStudyShelfLife(outcomes: readonly AttributeShelfLife[]): StudyShelfLife {
  const reason = 'the analysis run recorded no shelf life across its attributes';
  return {
    attributes: outcomes.map((outcome) => ({ ...outcome, limiting: false })),
    limitingAttributes: [],
    proposedShelfLife: null,
    proposedShelfLifeMonths: null,
    timeUnit: outcomes[0]?.timeUnit ?? '',
    reason,
    statement: `No shelf life is proposed for the study: ${reason}; each attribute's own outcome is shown with it.`,
  };
}

export function studyShelfLifeContext(verdict: StudyShelfLife) {
  const rows = verdict.attributes.map((entry) => ({
    attribute: entry.attribute.name,
    criterion: criterionText(entry.attribute),
    proposed: shelfLifeText(entry),
    limiting: entry.limiting,
    reason: entry.reason,
    statement: entry.statement,
  }));
  return {
    proposed: shelfLifeText(verdict),
    proposedShelfLife: verdict.proposedShelfLife,
    proposedShelfLifeMonths: verdict.proposedShelfLifeMonths,
    timeUnit: verdict.timeUnit,
    limitingAttributes: verdict.limitingAttributes,
    limitingText: namesInWords(verdict.limitingAttributes),
    reason: verdict.reason,
    statement: verdict.statement,
    rows,
    table: {
      caption:
        "The study's shelf life: each attribute evaluated separately at the long-term condition; the shortest proposal governs (ICH Q1E Appendix A)",
      columns: [
        { key: 'attribute', label: 'Attribute' },
        { key: 'criterion', label: 'Acceptance criterion' },
        { key: 'proposed', label: 'Proposed', align: 'right' },
        { key: 'limiting', label: 'Limiting' },
      ],
      rows: rows.map((row) => ({
        attribute: row.attribute,
        criterion: row.criterion,
        proposed: row.proposed ?? `none: ${row.reason ?? 'no proposal'}`,
        limiting: row.limiting ? 'yes' : '',
      })),
    } as ReportTable,
  };
}

/**
 * The mass balance in one sentence for the summary page: the range of the last pull's percentage
 * of initial over the batches and conditions; the trends and every pull are in the report body.
 */
export function massBalanceSummary(balance: MassBalance): string {
  const what = `${balance.assayAttribute} plus ${namesInWords(balance.degradantAttributes)}`;
  const lasts = balance.series
    .map((entry) => entry.points[entry.points.length - 1]?.percentOfInitial)
    .filter((value): value is number => value !== undefined);
  if (lasts.length === 0) return `Mass balance (${what}): not computed. ${balance.statement}`;
  const low = significant(Math.min(...lasts), 4);
  const high = significant(Math.max(...lasts), 4);
  const range = low === high ? `${low} %` : `${low} to ${high} %`;
  const count = lasts.length === 1 ? 'the one batch and condition' : `${lasts.length} batches and conditions`;
  return `Mass balance (${what}): ${range} of the initial value at the last pull, over ${count}; the trends are under Mass balance.`;
}

export function massBalanceContext(balance: MassBalance) {
  const condition = (temperatureC: number | null) => (temperatureC === null ? '—' : `${temperatureC} °C`);
  const value = (number: number) => significant(number, 4);
  const asRead = (number: number) => String(Number(number.toPrecision(6)));
  return {
    assayAttribute: balance.assayAttribute,
    degradantAttributes: balance.degradantAttributes,
    degradantText: namesInWords(balance.degradantAttributes),
    unit: balance.unit,
    timeUnit: balance.timeUnit,
    statement: balance.statement,
    summary: massBalanceSummary(balance),
    table: {
      caption: `Mass balance: ${balance.assayAttribute} plus ${namesInWords(balance.degradantAttributes)} (${balance.unit}), as % of the first pull, with its trend per ${balance.timeUnit}`,
      columns: [
        { key: 'batch', label: 'Batch' },
        { key: 'condition', label: 'Condition' },
        { key: 'pulls', label: 'Pulls', align: 'right' },
        { key: 'last', label: 'Last pull, % of initial', align: 'right' },
        { key: 'trend', label: `Trend, % per ${balance.timeUnit}`, align: 'right' },
      ],
      rows: balance.series.map((entry) => {
        const last = entry.points[entry.points.length - 1];
        return {
          batch: entry.batch ?? '—',
          condition: condition(entry.temperatureC),
          pulls: String(entry.points.length),
          last: last ? `${value(last.percentOfInitial)} at ${last.time} ${balance.timeUnit}` : '—',
          trend: entry.trend
            ? `${significant(entry.trend.slope, 3)}\n${interval([entry.trend.lower, entry.trend.upper], 3)} (${Math.round(entry.trend.confidenceLevel * 100)} %)`
            : 'fewer than 3 pulls',
        };
      }),
      empty: 'No pull with the assay and every degradation product measured.',
    } as ReportTable,
    pointsTable: {
      caption: `Mass balance at each pull (${balance.unit})`,
      columns: [
        { key: 'batch', label: 'Batch' },
        { key: 'condition', label: 'Condition' },
        { key: 'time', label: `Time (${balance.timeUnit})`, align: 'right' },
        { key: 'assay', label: balance.assayAttribute, align: 'right' },
        { key: 'degradants', label: 'Degradation products', align: 'right' },
        { key: 'total', label: 'Total', align: 'right' },
        { key: 'percent', label: '% of initial', align: 'right' },
      ],
      rows: balance.series.flatMap((entry) =>
        entry.points.map((point) => ({
          batch: entry.batch ?? '—',
          condition: condition(entry.temperatureC),
          time: String(point.time),
          // Measured values as read (up to 6 significant figures), the sums to 4.
          assay: asRead(point.assay),
          degradants: asRead(point.degradants),
          total: value(point.total),
          percent: value(point.percentOfInitial),
        })),
      ),
    } as ReportTable,
  };
}
