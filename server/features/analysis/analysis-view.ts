import { MIN_EXCLUSION_REASON_LENGTH } from '../../../shared/api/analyses.ts';
import { analysisFigures } from '../../../shared/figures/analysis-figures.ts';
import { otherAttributeFigures } from '../../../shared/figures/attribute-figures.ts';
import { type FigureDataTable, figureDataTables } from '../../../shared/figures/figure-data-tables.ts';
import { MODEL_NAMES } from '../../../shared/figures/results-table.ts';
import { formatPercent, formatSignificant } from '../../../shared/figures/significant-figures.ts';
import { attributeResults } from './analysis-attribute-results.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { massBalanceModel, otherAttributesModel, studyVerdictModel } from './analysis-study-verdict.ts';
import { groupedWarnings, verdictSummary } from './analysis-verdict.ts';
import type { NumberCell } from './number-cell.ts';
import { studyStandingModel } from './study-snapshot.ts';

/**
 * What the analysis page shows, as plain strings and numbers for the Handlebars view. Every
 * number comes from `resultRows` (the same rows the CSV and workbook are written from) and is
 * written by `formatSignificant`; each cell also carries the row key and the full-precision value
 * in data attributes, so a test (or a person with the developer tools) can check the screen
 * against the export.
 */

export const CAUTION =
  'These statistical estimates support, but do not replace, qualified judgement, the applicable guidance (ICH Q1A(R2), Q1E) and your laboratory’s approved procedures. Check the data, the exclusions and the model before relying on any figure here.';
export type { NumberCell };

/** The figures of a run, as the screen, the figures API and the export all show them. */
export function runFigures(run: AnalysisRunRecord) {
  return figuresAndTables(run).figures;
}

/** The figures, with the other attributes' data tables (their figure code makes both at once). */
function figuresAndTables(run: AnalysisRunRecord) {
  const storage = run.study.storageTemperatureC;
  const first = analysisFigures(run.result, run.series, studyLimits(run.study), storage);
  // Issue 15 §1: the other attributes' figures follow the first's, under their own ids.
  if (!run.result.otherAttributes?.length) return { figures: first, otherTables: {} };
  const others = otherAttributeFigures(run.result, run.series, storage);
  return {
    figures: [...first, ...others.flatMap((entry) => entry.figures)],
    otherTables: Object.assign({}, ...others.map((entry) => entry.tables)) as Record<string, FigureDataTable>,
  };
}

export function studyLimits(study: { lowerLimit: number | null; upperLimit: number | null }) {
  return {
    ...(study.lowerLimit === null ? {} : { lower: study.lowerLimit }),
    ...(study.upperLimit === null ? {} : { upper: study.upperLimit }),
  };
}

/** Above this many observations the point is chosen by series and number, not from one long list. */
export const MAX_LISTED_POINTS = 1500;

export interface FormState {
  problems: { field: string; message: string }[];
  point: string;
  reason: string;
}

export function analysisPageModel(run: AnalysisRunRecord, canExclude: boolean, form?: FormState) {
  const { analysis } = run.result;
  const options = run.options.analyst;
  const { figures, otherTables } = figuresAndTables(run);
  const figureIds = new Set(figures.map((figure) => figure.id));
  // Issue 17 §4: each figure's "data" table, from the same stored result as the figure.
  const tables = { ...figureDataTables(run.result, run.series, figures), ...otherTables };

  const figure = (id: string) => {
    const found = figures.find((candidate) => candidate.id === id);
    return found
      ? {
          id: found.id,
          title: found.title,
          description: found.description,
          group: found.group,
          table: tables[id] ?? null,
        }
      : null;
  };
  const study = run.study;
  const limits = [
    study.lowerLimit === null ? null : `not less than ${study.lowerLimit}`,
    study.upperLimit === null ? null : `not more than ${study.upperLimit}`,
  ].filter(Boolean);

  const {
    series,
    arrhenius: arrheniusModel,
    shelfLife,
  } = attributeResults({
    analysis,
    series: run.series,
    figureIds,
    figure,
    storageTemperatureC: study.storageTemperatureC,
    prefix: '',
  });

  const summary = verdictSummary(analysis, shelfLife, arrheniusModel, options.order);
  const warningGroups = groupedWarnings(analysis);
  const pointCount = run.series.reduce((sum, entry) => sum + entry.observations.length, 0);
  const compactPicker = pointCount > MAX_LISTED_POINTS;
  const points = (compactPicker ? [] : run.series).map((entry, seriesIndex) => ({
    label: entry.id,
    options: entry.observations.map((observation, index) => ({
      value: `${seriesIndex}:${index}`,
      label: `${entry.id} · t = ${formatSignificant(observation.time, 4)} ${entry.timeUnit} · ${observation.censored ? observation.censored.text : formatSignificant(observation.value, 4)} ${entry.valueUnit}${observation.source?.cell ? ` (${observation.source.cell})` : ''}`,
      disabled: observation.excluded !== undefined,
      selected: form?.point === `${seriesIndex}:${index}`,
    })),
  }));
  const problem = (field: string) => form?.problems.find((entry) => entry.field === field)?.message ?? '';

  return {
    title: `Analysis #${run.id} · ${study.product}`,
    run: {
      id: run.id,
      runBy: run.runBy.fullName,
      runAt: run.runAt,
      engineVersion: run.engineVersion,
      datasetId: run.datasetId,
      datasetSha256: run.datasetSha256,
      confidence: formatPercent(options.confidenceLevel, 0),
      errorModel: options.errorModel,
      order:
        options.order === undefined
          ? 'decided by the data'
          : `fixed at ${MODEL_NAMES[String(options.order)]}`,
      supersedesRunId: run.supersedesRunId,
      supersededByRunId: run.supersededByRunId,
    },
    study: {
      id: study.id,
      title: study.title,
      product: study.product,
      attribute: `${study.attribute} (${study.unit})`,
      criterion: limits.length ? `${limits.join(' and ')} ${study.unit}` : 'none stated',
      storage: [
        study.storageTemperatureC === null ? null : `${study.storageTemperatureC} °C`,
        study.storageHumidityPercent === null ? null : `${study.storageHumidityPercent} % RH`,
      ]
        .filter(Boolean)
        .join(' / '),
    },
    studyStanding: studyStandingModel(run.studyStanding, run.id),
    warningGroups,
    summary,
    series,
    arrhenius: arrheniusModel,
    shelfLife,
    exclusions: run.exclusions.map((exclusion) => ({
      ...exclusion,
      pointNumber: exclusion.observationIndex + 1,
      time: formatSignificant(exclusion.time, 4),
      value: formatSignificant(exclusion.value, 4),
    })),
    methodParagraphs: run.methodStatement.split(/\n\n+/),
    caution: CAUTION,
    canExclude: canExclude && run.supersededByRunId === null,
    canRerun: canExclude,
    noOrderNamed: analysis.series.every(
      (result) => !result.analysis || result.analysis.reportedOrder === null,
    ),
    rerun: {
      orders: [
        { value: '', label: 'decided by the data', selected: options.order === undefined },
        ...[0, 1, 2].map((order) => ({
          value: String(order),
          label: `fixed: ${MODEL_NAMES[String(order)]}`,
          selected: options.order === order,
        })),
      ],
      levels: [0.9, 0.95, 0.99].map((level) => ({
        value: String(level),
        label: formatPercent(level, 0),
        selected: options.confidenceLevel === level,
      })),
      errorModels: ['auto', 'constant', 'proportional'].map((model) => ({
        value: model,
        label: model,
        selected: options.errorModel === model,
      })),
    },
    exclusionForm: {
      points,
      compactPicker,
      series: run.series.map((entry, index) => ({
        value: String(index),
        label: `${entry.id} (${entry.observations.length} points)`,
        selected: form?.point.startsWith(`${index}:`) ?? false,
      })),
      reason: form?.reason ?? '',
      minReason: MIN_EXCLUSION_REASON_LENGTH,
      pointProblem: problem('observationIndex') || problem('seriesId') || problem('point'),
      reasonProblem: problem('reason'),
      formProblem: problem('form'),
    },
    hasFigures: figures.length > 0,
    hasLowerLimit: study.lowerLimit !== null && study.direction !== 'increasing',
    hasUpperLimit: study.upperLimit !== null && study.direction !== 'decreasing',
    // Issue 15 §1: only a run of several attributes carries these keys; one attribute reads as before.
    ...(run.result.otherAttributes?.length || run.result.studyShelfLife || run.result.massBalance
      ? {
          multiAttribute: {
            firstAttribute: study.attribute,
            verdict: studyVerdictModel(run.result),
            others: otherAttributesModel({
              result: run.result,
              series: run.series,
              figureIds,
              figure,
              storageTemperatureC: study.storageTemperatureC,
              fixedOrder: options.order,
            }),
            massBalance: massBalanceModel(run.result.massBalance),
          },
        }
      : {}),
  };
}
