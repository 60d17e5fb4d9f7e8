import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import {
  type StudyAttribute,
  sameAttributeName,
  seriesOfAttribute,
} from '../../../../shared/kinetics/stability/study-attributes.ts';
import type { AttributeShelfLife } from '../../../../shared/kinetics/stability/study-shelf-life-types.ts';
import type { Series } from '../../../../shared/kinetics/types.ts';
import {
  attributeArrheniusSummary,
  criterionText,
  seriesSummaries,
  shelfLifeSummaries,
} from './report-context-summaries.ts';
import { resultTableGroups } from './report-context-tables.ts';
import { dataTables } from './report-data-tables.ts';
import { reportFigureAttribute, reportFigurePart } from './report-figure-parts.ts';
import {
  groupedWarnings,
  mergedNotes,
  repeatedCellsAsNotes,
  sharedShapeTable,
} from './report-shared-sentences.ts';
import {
  massBalanceContext,
  noStudyShelfLife,
  oneAttributeOutcome,
  shelfLifeText,
  studyShelfLifeContext,
  studyShelfLifeOfOne,
} from './report-study-verdict.ts';
import { interval, significant } from './template-format.ts';
import type { ReportTable, TableColumn } from './template-helpers.ts';

/**
 * The parts of a report context that go attribute by attribute (ICH Q1E Appendix A: each
 * attribute is evaluated separately and the shortest shelf life governs): `attributes[]`, one
 * entry per attribute in the study's order with its criterion, its results table (one row per
 * batch and condition), its Q1E outcome, its figures, exclusions and censored results;
 * `studyShelfLife`, the study's proposed shelf life with the limiting attribute; and
 * `massBalance` (assay plus degradation products against the initial value) when the run has one.
 *
 * A run of one attribute has one entry, and its `studyShelfLife` is built from that attribute's
 * long-term proposal, so a template can always print both. A run of several attributes prints
 * the stored `studyShelfLife` as the run computed it: nothing is estimated here.
 *
 * Throws nothing.
 *
 * Example: a run of Assay (limit ≥ 95 %) and Impurity B (≤ 0.5 %) whose impurity proposes 18
 * months and assay 24 gives attributes[1].limiting true and studyShelfLife.limitingText "Impurity B".
 */

/** The figures of the context, as the template sees them. */
export interface ContextFigure {
  id: string;
  number: number;
  title: string;
  description: string;
}

/** The report's first attribute: the study's own columns (the rule fields when the run has them). */
export interface FirstAttributeInput {
  attribute: string;
  unit: string;
  direction: StudyAttribute['direction'];
  lowerLimit: number | null;
  upperLimit: number | null;
  censoredRule?: StudyAttribute['censoredRule'] | null;
  censoredValue?: number | null;
}

function censoredRuleText(attribute: StudyAttribute): string {
  return attribute.censoredRule === 'stated-value'
    ? `results reported below a limit (such as "<LOQ") are fitted at ${attribute.censoredValue ?? 'the stated value'} ${attribute.unit}, the value the study states; their text is kept`
    : 'results reported below a limit (such as "<LOQ") are excluded from the fit';
}

const estimateCell = (
  value: { estimate: number | null; interval: [number, number] | null; unit: string } | null,
  digits: number,
) =>
  value === null
    ? '—'
    : [significant(value.estimate, digits, value.unit), value.interval ? interval(value.interval, 3) : '']
        .filter(Boolean)
        .join('\n');

/** One row per batch and condition: points, order, k and the times that decide a shelf life. */
function attributeResultsTable(
  name: string,
  series: ReturnType<typeof seriesSummaries>,
  confidenceLevel: number,
): ReportTable {
  const has = (key: 't90' | 'timeToLowerLimit' | 'timeToUpperLimit') =>
    series.some((entry) => entry[key] !== null && entry[key].estimate !== null);
  const columns: TableColumn[] = [
    { key: 'batch', label: 'Batch' },
    { key: 'condition', label: 'Condition' },
    { key: 'points', label: 'Points', align: 'right' },
    { key: 'order', label: 'Order reported' },
    { key: 'k', label: 'Rate constant k', align: 'right' },
    ...(has('t90') ? [{ key: 't90', label: 't90 (10 % loss)', align: 'right' as const }] : []),
    ...(has('timeToLowerLimit')
      ? [{ key: 'lower', label: 'Time to the lower limit', align: 'right' as const }]
      : []),
    ...(has('timeToUpperLimit')
      ? [{ key: 'upper', label: 'Time to the upper limit', align: 'right' as const }]
      : []),
  ];
  return {
    caption: `${name}: results per batch and condition (${Math.round(confidenceLevel * 100)} % interval below each estimate)`,
    columns,
    rows: series.map((entry) => ({
      batch: entry.batch ?? '—',
      condition: entry.temperatureC === null ? '—' : `${entry.temperatureC} °C`,
      points: String(entry.points),
      order: entry.analysed ? (entry.reportedOrder ?? 'not identified') : 'not analysed',
      k: estimateCell(entry.k, 4),
      t90: estimateCell(entry.t90, 3),
      lower: estimateCell(entry.timeToLowerLimit, 3),
      upper: estimateCell(entry.timeToUpperLimit, 3),
    })),
    empty: 'No series of this attribute in the dataset.',
  };
}

/** The censored results of an attribute's series, with their text and what the rule did. */
function censoredRows(attribute: StudyAttribute, series: readonly Series[]) {
  return series.flatMap((entry) =>
    entry.observations
      .filter((observation) => observation.censored !== undefined)
      .map((observation) => ({
        seriesId: entry.id,
        time: observation.time,
        timeUnit: entry.timeUnit,
        text: observation.censored!.text,
        cell: observation.source?.cell ?? null,
        handling:
          attribute.censoredRule === 'stated-value'
            ? `fitted at ${attribute.censoredValue ?? observation.value} ${attribute.unit}`
            : 'excluded from the fit',
      })),
  );
}

function attributeEntry(
  attribute: StudyAttribute,
  index: number,
  analysis: DatasetAnalysis,
  series: readonly Series[],
  figures: readonly ContextFigure[],
  storageTemperatureC: number | null,
  outcome: AttributeShelfLife | undefined,
) {
  const summaries = seriesSummaries(analysis);
  const shelfLife = shelfLifeSummaries(analysis, storageTemperatureC).sort(
    (a, b) =>
      Number(b.isLongTermCondition) - Number(a.isLongTermCondition) ||
      Number(b.isStorageCondition) - Number(a.isStorageCondition),
  );
  const own = figures.filter((figure) => reportFigureAttribute(figure.id) === index);
  const figuresOf = (part: string) => own.filter((figure) => reportFigurePart(figure.id) === part);
  // The shelf life is claimed at the storage condition: its Q1E plot goes with the results, the
  // other conditions' (for information) with the per-series details.
  const claimed = `q1e-${storageTemperatureC === null ? 'all' : String(storageTemperatureC).replace(/[^0-9]/g, '-')}`;
  const isClaimed = (figure: ContextFigure) => figure.id.replace(/^attribute-\d+-/, '') === claimed;
  const shelfLifeFigures = figuresOf('shelfLife');
  const atStorage = shelfLifeFigures.some(isClaimed) ? shelfLifeFigures.filter(isClaimed) : shelfLifeFigures;
  const unitOf = new Map(series.map((entry) => [entry.id, entry]));
  const censored = censoredRows(attribute, series);
  // The attribute's own copy of the tables, with notes that differ only in numbers said once.
  const grouped = resultTableGroups(analysis);
  const tables = {
    shelfLife: grouped.shelfLife.map((table) => mergedNotes(repeatedCellsAsNotes(table, 'note'))),
    temperature: grouped.temperature.map((table) => repeatedCellsAsNotes(table, 'note')),
    series: grouped.series.map(mergedNotes),
  };
  // `resultTableGroups` puts the proposal table (runs recorded since proposals) before the estimates.
  const hasProposal = (analysis.shelfLife ?? []).some((condition) => condition.proposal !== undefined);
  return {
    number: index + 1,
    name: attribute.name,
    unit: attribute.unit,
    direction: attribute.direction,
    lowerLimit: attribute.lowerLimit,
    upperLimit: attribute.upperLimit,
    acceptanceCriterion: criterionText(attribute),
    limiting: outcome?.limiting ?? false,
    outcome: {
      proposed: outcome ? shelfLifeText(outcome) : null,
      proposedShelfLifeMonths: outcome?.proposedShelfLifeMonths ?? null,
      reason: outcome?.reason ?? null,
      statement: outcome?.statement ?? shelfLife.map((entry) => entry.statement).join(' '),
    },
    series: summaries,
    shelfLife,
    proposals: shelfLife.filter((entry) => entry.isLongTermCondition),
    arrhenius: attributeArrheniusSummary(analysis),
    resultsTable: attributeResultsTable(attribute.name, summaries, analysis.confidenceLevel),
    tables,
    /** The proposal per condition (the Q1E outcome), or null for runs recorded before proposals. */
    proposalTable: hasProposal ? (tables.shelfLife[0] ?? null) : null,
    /** The ICH Q1E statistical estimate per condition with its limiting line, or null. */
    estimateTable: tables.shelfLife[hasProposal ? 1 : 0] ?? null,
    seriesBasis: sharedShapeTable(
      `${attribute.name}: how each series was analysed — points used, the order reported and what the data say`,
      [
        { key: 'where', label: 'Series' },
        { key: 'points', label: 'Points', align: 'right' },
        { key: 'order', label: 'Order reported' },
      ],
      { key: 'basis', label: 'Basis' },
      summaries.map((entry) => ({
        cells: {
          where: entry.id,
          points: String(entry.points),
          order: entry.reportedOrder ?? 'not identified',
        },
        statement: entry.verdict,
      })),
    ),
    figureGroups: {
      shelfLife: shelfLifeFigures,
      /** The Q1E plot of the storage condition (all of them when none is at it). */
      shelfLifeAtStorage: atStorage,
      /** The Q1E plots of the other conditions. */
      shelfLifeOther: shelfLifeFigures.filter((figure) => !atStorage.includes(figure)),
      temperature: figuresOf('temperature'),
      series: figuresOf('series'),
    },
    exclusions: analysis.methodStatement.data.excludedPoints.map((point) => ({
      seriesId: point.seriesId,
      time: point.time,
      timeUnit: unitOf.get(point.seriesId)?.timeUnit ?? '',
      value: point.value,
      valueUnit: unitOf.get(point.seriesId)?.valueUnit ?? '',
      /** The value as reported: a censored result's text ("< 0.05"), else the value with its unit. */
      valueText:
        unitOf
          .get(point.seriesId)
          ?.observations.find((observation) => observation.time === point.time && observation.censored)
          ?.censored?.text ?? `${point.value} ${unitOf.get(point.seriesId)?.valueUnit ?? ''}`.trim(),
      reason: point.reason,
      cell: point.cell,
    })),
    censoredRule: attribute.censoredRule,
    censoredRuleText: censoredRuleText(attribute),
    censored,
    dataTables: dataTables(series),
    warnings: groupedWarnings(
      analysis.warnings.map((warning) => warning.message),
      summaries.flatMap((entry) => entry.warnings.map((message) => ({ seriesId: entry.id, message }))),
    ),
    seriesCount: analysis.series.length,
    pointsUsed: analysis.methodStatement.data.pointsUsed,
    methodStatement: {
      paragraphs: analysis.methodStatement.text
        .split(/\n{2,}/)
        .filter((paragraph) => paragraph.trim() !== ''),
      /** The paragraphs no earlier attribute's statement has (set by `reportAttributes`). */
      ownParagraphs: [] as string[],
    },
  };
}

export function reportAttributes(input: {
  first: FirstAttributeInput;
  result: DatasetAnalysis | StoredAnalysisResult;
  analysis: DatasetAnalysis;
  series: readonly Series[];
  figures: readonly ContextFigure[];
  storageTemperatureC: number | null;
}) {
  const stored = 'analysis' in input.result ? input.result : null;
  const others = stored?.otherAttributes ?? [];
  const first: StudyAttribute = {
    name: input.first.attribute,
    unit: input.first.unit,
    direction: input.first.direction,
    lowerLimit: input.first.lowerLimit,
    upperLimit: input.first.upperLimit,
    workingOrder: null,
    workingOrderReason: '',
    censoredRule: input.first.censoredRule ?? 'exclude',
    censoredValue: input.first.censoredValue ?? null,
    massBalanceRole: null,
  };
  const attributes = [first, ...others.map((other) => other.attribute)];
  const analyses = [input.analysis, ...others.map((other) => other.analysis)];
  const outcomes = attributes.map((attribute, index) =>
    oneAttributeOutcome(attribute, analyses[index]!, input.storageTemperatureC),
  );
  // A run of several attributes stores its verdict; one that does not (a damaged record) gets
  // none here rather than one invented from a single attribute.
  const verdict =
    others.length === 0
      ? studyShelfLifeOfOne(outcomes[0]!)
      : (stored?.studyShelfLife ?? noStudyShelfLife(outcomes));
  const outcomeOf = (name: string) =>
    verdict.attributes.find((entry) => sameAttributeName(entry.attribute.name, name));
  const entries = attributes.map((attribute, index) =>
    attributeEntry(
      attribute,
      index,
      analyses[index]!,
      others.length === 0 ? input.series : seriesOfAttribute(input.series, attributes, attribute),
      input.figures,
      input.storageTemperatureC,
      outcomeOf(attribute.name),
    ),
  );
  const said = new Set<string>();
  for (const entry of entries) {
    entry.methodStatement.ownParagraphs = entry.methodStatement.paragraphs.filter(
      (paragraph) => !said.has(paragraph),
    );
    for (const paragraph of entry.methodStatement.paragraphs) said.add(paragraph);
  }
  return {
    attributes: entries,
    studyShelfLife: studyShelfLifeContext(verdict),
    massBalance: stored?.massBalance ? massBalanceContext(stored.massBalance) : null,
  };
}
