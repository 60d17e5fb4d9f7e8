import type { AnalysisFigure } from '../../../../shared/api/analyses.ts';
import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import type { CensoredRule } from '../../../../shared/kinetics/stability/study-attributes.ts';
import type { AttributeDirection, Series } from '../../../../shared/kinetics/types.ts';
import { reportAttributes } from './report-attributes.ts';
import {
  analysisOf,
  arrheniusSummary,
  criterionText,
  seriesSummaries,
  shelfLifeSummaries,
} from './report-context-summaries.ts';
import { allResultTables, resultTableGroups, sharedStatementTable } from './report-context-tables.ts';
import { dataTables } from './report-data-tables.ts';
import { reportFigureAttribute, reportFigurePart } from './report-figure-parts.ts';
import type { ReportTemperatureLog } from './report-temperature-logs.ts';
import { isoDay } from './template-format.ts';
import type { ReportTable } from './template-helpers.ts';

/**
 * Builds the plain object a report template sees, from the records a report is made of: the
 * organisation, the study, one stored analysis run with its dataset and figures, and the
 * report's own number, version, author and time. Every field is listed with its meaning in
 * `TEMPLATE_VARIABLES` (report-context-variables.ts), which the template editor shows.
 *
 * The context holds data only — numbers, text, lists and Date values (for the isoDate helper) —
 * and no functions, so a template finds nothing to call. Optional facts are
 * present as null (never missing), so strict templates can test them with {{#if}}.
 *
 * Throws `Error` when the run holds no analysis (a corrupt record) — a report must not be
 * printed without its results.
 *
 * Example: for study "Veltrazine 50 mg tablets" and report RL-2026-0007 version 2, the context
 * has report.number "RL-2026-0007", report.version 2 and study.product as stored.
 */

export const REPORT_CAUTION =
  'The statistical estimates in this report support, and do not replace, the judgement of qualified people, ' +
  "applicable regulatory guidance (such as ICH Q1A(R2) and Q1E) and the laboratory's own approved procedures. " +
  'Extrapolated values in particular rest on the assumption that the fitted model holds beyond the data.';

export const SIGNATURES_PLACEHOLDER = 'Signatures are applied when the report is signed.';

export interface ReportContextInput {
  organisation: { name: string; timeZone: string };
  study: {
    title: string;
    product: string;
    attribute: string;
    unit: string;
    direction: AttributeDirection;
    lowerLimit: number | null;
    upperLimit: number | null;
    storageTemperatureC: number | null;
    storageHumidityPercent: number | null;
    batches: string[];
    notes: string;
    /** The first attribute's rule for results below a limit; 'exclude' when not given. */
    censoredRule?: CensoredRule | null;
    censoredValue?: number | null;
  };
  analysisRun: {
    id: number;
    runAt: Date;
    runBy: string;
    engineVersion: string;
    datasetId: number;
    datasetSha256: string;
    supersedesRunId: number | null;
    /** The stored result: the engine's DatasetAnalysis, or the StoredAnalysisResult wrapping it. */
    result: DatasetAnalysis | StoredAnalysisResult;
    /** The dataset's series, for the data tables. */
    series: Series[];
  };
  /** The analysis screen's figures (same specs); their SVG is rendered separately. */
  figures: readonly Pick<AnalysisFigure, 'id' | 'title' | 'description'>[];
  report: { number: string; version: number; author: string; createdAt: Date; title?: string };
  /** Temperature-log assessments attached to the version (`report-temperature-logs.ts`). */
  temperatureLogs?: readonly ReportTemperatureLog[];
  /** IANA time zone for dates; the organisation's when omitted. */
  timeZone?: string;
}

function storageText(study: ReportContextInput['study']): string {
  const parts = [
    study.storageTemperatureC === null ? null : `${study.storageTemperatureC} °C`,
    study.storageHumidityPercent === null ? null : `${study.storageHumidityPercent} % RH`,
  ].filter((part) => part !== null);
  return parts.length === 0 ? 'not stated' : parts.join(' / ');
}

export function buildReportContext(input: ReportContextInput) {
  const { organisation, study, analysisRun, report } = input;
  const timeZone = input.timeZone ?? organisation.timeZone;
  const analysis = analysisOf(analysisRun.result);
  const statement = analysis.methodStatement;
  const unitOf = new Map(analysisRun.series.map((series) => [series.id, series]));
  const exclusions = statement.data.excludedPoints.map((point) => ({
    seriesId: point.seriesId,
    time: point.time,
    timeUnit: unitOf.get(point.seriesId)?.timeUnit ?? '',
    value: point.value,
    valueUnit: unitOf.get(point.seriesId)?.valueUnit ?? '',
    reason: point.reason,
    cell: point.cell,
  }));
  const shelfLife = shelfLifeSummaries(analysis, study.storageTemperatureC).sort(
    (a, b) =>
      Number(b.isLongTermCondition) - Number(a.isLongTermCondition) ||
      Number(b.isStorageCondition) - Number(a.isStorageCondition),
  );
  const series = seriesSummaries(analysis);
  const headline =
    shelfLife.length > 0
      ? shelfLife.map((entry) => entry.statement)
      : series.map((entry) => `${entry.id}: ${entry.verdict}`);
  const proposals = shelfLife.filter((entry) => entry.isLongTermCondition);
  const contextFigures = input.figures.map((figure, index) => ({
    id: figure.id,
    number: index + 1,
    title: figure.title,
    description: figure.description,
  }));
  const tables = resultTableGroups(analysis);
  // The top-level groups are the first attribute's, as `summary` and `tables` are.
  const figuresOf = (part: string) =>
    contextFigures.filter(
      (figure) => reportFigurePart(figure.id) === part && reportFigureAttribute(figure.id) === 0,
    );
  const byAttribute = reportAttributes({
    first: study,
    result: analysisRun.result,
    analysis,
    series: analysisRun.series,
    figures: contextFigures,
    storageTemperatureC: study.storageTemperatureC,
  });
  return {
    organisation: { name: organisation.name, timeZone },
    report: {
      number: report.number,
      version: report.version,
      title: report.title ?? `Stability kinetics report: ${study.product}`,
      author: report.author,
      createdAt: report.createdAt,
      createdDay: isoDay(report.createdAt, timeZone),
    },
    study: {
      title: study.title,
      product: study.product,
      attribute: study.attribute,
      unit: study.unit,
      direction: study.direction,
      lowerLimit: study.lowerLimit,
      upperLimit: study.upperLimit,
      acceptanceCriterion: criterionText(study),
      storage: {
        temperatureC: study.storageTemperatureC,
        humidityPercent: study.storageHumidityPercent,
        text: storageText(study),
      },
      batches: study.batches,
      conditions: [
        ...new Set(
          analysisRun.series.map((entry) => entry.temperatureC).filter((value) => value !== undefined),
        ),
      ]
        .sort((a, b) => (a as number) - (b as number))
        .map((temperatureC) => `${temperatureC} °C`),
      notes: study.notes,
    },
    analysis: {
      runId: analysisRun.id,
      runAt: analysisRun.runAt,
      runBy: analysisRun.runBy,
      supersedesRunId: analysisRun.supersedesRunId,
      engineVersion: analysisRun.engineVersion,
      datasetId: analysisRun.datasetId,
      datasetSha256: analysisRun.datasetSha256,
      confidenceLevel: analysis.confidenceLevel,
      seriesCount: analysis.series.length,
      pointsUsed: statement.data.pointsUsed,
    },
    summary: { headline, series, shelfLife, proposals, arrhenius: arrheniusSummary(analysis) },
    resultTables: allResultTables(tables) as ReportTable[],
    dataTables: dataTables(analysisRun.series),
    tables,
    seriesBasis: sharedStatementTable(
      'How each series was analysed: points used, the order reported and what the data say',
      [
        { key: 'where', label: 'Series' },
        { key: 'points', label: 'Points', align: 'right' },
        { key: 'order', label: 'Order reported' },
      ],
      { key: 'basis', label: 'Basis' },
      series.map((entry) => ({
        cells: {
          where: entry.id,
          points: String(entry.points),
          order: entry.reportedOrder ?? 'not identified',
        },
        statement: entry.verdict,
      })),
    ),
    figures: contextFigures,
    figureGroups: {
      shelfLife: figuresOf('shelfLife'),
      temperature: figuresOf('temperature'),
      series: figuresOf('series'),
    },
    exclusions,
    warnings: [
      ...analysis.warnings.map((warning) => warning.message),
      ...series.flatMap((entry) => entry.warnings.map((message) => `${entry.id}: ${message}`)),
    ],
    methodStatement: {
      paragraphs: statement.text.split(/\n{2,}/).filter((paragraph) => paragraph.trim() !== ''),
      references: statement.references,
    },
    attributes: byAttribute.attributes,
    studyShelfLife: byAttribute.studyShelfLife,
    massBalance: byAttribute.massBalance,
    temperatureLogs: [...(input.temperatureLogs ?? [])],
    caution: REPORT_CAUTION,
    signatures: {
      placeholder: SIGNATURES_PLACEHOLDER,
      entries: [] as { name: string; meaning: string; signedAt: Date }[],
    },
  };
}

export type ReportContext = ReturnType<typeof buildReportContext>;
