import type { AnalysisFigure } from '../../../../shared/api/analyses.ts';
import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import { inTimeUnit } from '../../../../shared/figures/time-unit-words.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import type { Q1eProposal } from '../../../../shared/kinetics/stability/q1e-proposal.ts';
import type { AttributeDirection, Series } from '../../../../shared/kinetics/types.ts';
import {
  allResultTables,
  dataTables,
  resultTableGroups,
  sharedStatementTable,
} from './report-context-tables.ts';
import { reportFigurePart } from './report-figure-parts.ts';
import type { ReportTemperatureLog } from './report-temperature-logs.ts';
import { isoDay, significant } from './template-format.ts';
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

const ORDER_WORDS = ['zero order', 'first order', 'second order'] as const;

function analysisOf(result: DatasetAnalysis | StoredAnalysisResult): DatasetAnalysis {
  const analysis = 'analysis' in result ? result.analysis : result;
  if (!analysis || !Array.isArray(analysis.series))
    throw new Error('The analysis run holds no analysis result.');
  return analysis;
}

function acceptanceCriterion(study: ReportContextInput['study']): string {
  const { lowerLimit: low, upperLimit: high, unit } = study;
  if (low !== null && high !== null) return `${low} to ${high} ${unit}`;
  if (low !== null) return `not less than ${low} ${unit}`;
  if (high !== null) return `not more than ${high} ${unit}`;
  return 'none stated';
}

function storageText(study: ReportContextInput['study']): string {
  const parts = [
    study.storageTemperatureC === null ? null : `${study.storageTemperatureC} °C`,
    study.storageHumidityPercent === null ? null : `${study.storageHumidityPercent} % RH`,
  ].filter((part) => part !== null);
  return parts.length === 0 ? 'not stated' : parts.join(' / ');
}

function seriesSummaries(analysis: DatasetAnalysis) {
  return analysis.series.map((result) => {
    const fitted = result.analysis;
    const reported = fitted?.reportedOrder ?? null;
    const model =
      reported === null ? null : (fitted?.models.find((candidate) => candidate.order === reported) ?? null);
    const figure = (
      value: { estimate: number | null; ci95: [number, number] | null; unit: string } | null | undefined,
    ) => (value ? { estimate: value.estimate, interval: value.ci95, unit: value.unit } : null);
    return {
      id: result.id,
      batch: result.batch,
      temperatureC: result.temperatureC,
      analysed: fitted !== null,
      notAnalysedReason: result.error?.message ?? null,
      points: fitted?.n ?? 0,
      verdict: fitted?.verdict ?? `Not analysed: ${result.error?.message ?? 'no result'}`,
      reportedOrder: reported === null ? null : ORDER_WORDS[reported],
      orderSource: fitted?.orderSource ?? null,
      errorModel: fitted?.errorModel ?? null,
      fractionReacted: fitted?.fractionReacted ?? null,
      k: model ? { estimate: model.k, interval: model.kCi95, unit: model.kUnit } : null,
      halfLife: figure(fitted?.halfLife),
      t90: figure(fitted?.t90),
      timeToLowerLimit: figure(fitted?.timeToLimit?.lower),
      timeToUpperLimit: figure(fitted?.timeToLimit?.upper),
      timeUnit: fitted?.timeUnit ?? null,
      valueUnit: fitted?.valueUnit ?? null,
      warnings: (fitted?.warnings ?? []).map((warning) => warning.message),
    };
  });
}

function shelfLifeSummaries(analysis: DatasetAnalysis, storageTemperatureC: number | null) {
  return (analysis.shelfLife ?? []).map((condition) => {
    const timeUnit =
      analysis.series.find((result) => condition.seriesIds.includes(result.id))?.analysis?.timeUnit ?? '';
    const result = condition.result;
    const isStorage = condition.temperatureC === null || condition.temperatureC === storageTemperatureC;
    const where =
      condition.temperatureC === null
        ? 'all series'
        : `${condition.temperatureC} °C${isStorage ? ' (storage condition)' : ' (not the storage condition; for information)'}`;
    const extrapolated = result?.extrapolation.beyondObservedData
      ? ', beyond the observed data (extrapolated)'
      : '';
    const estimateStatement = !result
      ? `Shelf life at ${where} not evaluated: ${condition.notApplicableReason ?? 'no result'}.`
      : result.shelfLife === null
        ? `At ${where} no crossing of the acceptance criterion within ${significant(result.horizon, 3, timeUnit)}: ${inTimeUnit(result.reason, timeUnit)}.`
        : `ICH Q1E statistical shelf-life estimate at ${where}: ${significant(result.shelfLife, 3, timeUnit)}${result.limitingLine ? `, limited by ${result.limitingLine}` : ''}${extrapolated} (model: ${result.model}).`;
    // Runs recorded before proposals carry none (stored results are never rewritten).
    const proposal = (condition as { proposal?: Q1eProposal }).proposal ?? null;
    const isLongTerm = proposal !== null && condition.role === 'long-term';
    const proposed = proposal?.proposedShelfLifeMonths ?? null;
    const statement = isLongTerm
      ? `Proposed shelf life at ${condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`} (long-term): ${proposed === null ? 'none' : `${proposed} month${proposed === 1 ? '' : 's'}`}. ${proposal.statement}`
      : estimateStatement;
    return {
      temperatureC: condition.temperatureC,
      role: proposal === null ? null : condition.role,
      isLongTermCondition: isLongTerm,
      proposedShelfLife: proposal?.proposedShelfLife ?? null,
      proposedShelfLifeMonths: proposed,
      proposedReason: proposal?.proposedReason ?? null,
      estimateExceedsLimit: proposal?.estimateExceedsLimit ?? null,
      extrapolationLimit: proposal?.extrapolationLimit ?? null,
      estimateStatement,
      isStorageCondition: isStorage,
      seriesIds: condition.seriesIds,
      transformReason: condition.transformReason,
      shelfLife: result?.shelfLife ?? null,
      timeUnit,
      status: result?.status ?? null,
      model: result?.model ?? null,
      limitingLine: result?.limitingLine ?? null,
      reason: inTimeUnit(result?.reason ?? condition.notApplicableReason ?? '', timeUnit),
      beyondObservedData: result?.extrapolation.beyondObservedData ?? null,
      statement,
    };
  });
}

function arrheniusSummary(analysis: DatasetAnalysis) {
  const arrhenius = analysis.arrhenius;
  if (!arrhenius) return null;
  const fit = arrhenius.fit;
  const prediction = arrhenius.prediction;
  const kilo = (value: number) => value / 1000;
  return {
    order: arrhenius.order === null ? null : ORDER_WORDS[arrhenius.order],
    orderWhy:
      arrhenius.orderSource === 'analyst'
        ? 'the order fixed by the analyst'
        : arrhenius.orderSource === 'study'
          ? 'the study’s working order, as no series named an order'
          : 'the order with the lowest summed AICc over the series',
    noOrderNamedWarning:
      analysis.warnings.find((warning) => warning.code === 'no-order-named')?.message ?? null,
    eyring: arrhenius.eyring?.fit
      ? {
          deltaHKJPerMol: kilo(arrhenius.eyring.fit.enthalpyOfActivation.estimate),
          deltaHInterval: arrhenius.eyring.fit.enthalpyOfActivation.interval?.map(kilo) ?? null,
          deltaSJPerMolK: arrhenius.eyring.fit.entropyOfActivation.estimate,
          deltaSInterval: arrhenius.eyring.fit.entropyOfActivation.interval ?? null,
        }
      : null,
    q10: arrhenius.q10
      ? {
          fromC: arrhenius.q10.fromC,
          toC: arrhenius.q10.toC,
          estimate: arrhenius.q10.estimate,
          interval: arrhenius.q10.interval,
        }
      : null,
    temperatures: arrhenius.rateConstants.map((point) => point.temperatureC),
    activationEnergyKJPerMol: fit ? kilo(fit.activationEnergy) : null,
    activationEnergyInterval: fit?.activationEnergyInterval ? fit.activationEnergyInterval.map(kilo) : null,
    intervalUnavailableReason: fit?.intervalUnavailableReason ?? null,
    rSquared: fit?.rSquared ?? null,
    notApplicableReason: arrhenius.notApplicableReason,
    prediction: prediction
      ? {
          temperatureC: prediction.temperatureC,
          k: prediction.rateConstant,
          kInterval: prediction.confidenceInterval,
          kUnit: arrhenius.kUnit,
          t90: prediction.t90?.estimate ?? null,
          timeUnit: analysis.series.find((result) => result.analysis)?.analysis?.timeUnit ?? '',
          t90Interval: prediction.t90?.ci ?? null,
          extrapolated: prediction.extrapolation !== null,
        }
      : null,
  };
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
  const figuresOf = (part: string) => contextFigures.filter((figure) => reportFigurePart(figure.id) === part);
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
      acceptanceCriterion: acceptanceCriterion(study),
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
    temperatureLogs: [...(input.temperatureLogs ?? [])],
    caution: REPORT_CAUTION,
    signatures: {
      placeholder: SIGNATURES_PLACEHOLDER,
      entries: [] as { name: string; meaning: string; signedAt: Date }[],
    },
  };
}

export type ReportContext = ReturnType<typeof buildReportContext>;
