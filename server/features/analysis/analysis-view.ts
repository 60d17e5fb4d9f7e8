import { MIN_EXCLUSION_REASON_LENGTH } from '../../../shared/api/analyses.ts';
import { analysisFigures } from '../../../shared/figures/analysis-figures.ts';
import { figureDataTables } from '../../../shared/figures/figure-data-tables.ts';
import { MODEL_NAMES, type ResultRow, resultRows } from '../../../shared/figures/results-table.ts';
import {
  formatInterval,
  formatPercent,
  formatSignificant,
  NOT_ESTIMABLE,
} from '../../../shared/figures/significant-figures.ts';
import { inTimeUnit } from '../../../shared/figures/time-unit-words.ts';
import { proposalView } from './analysis-proposal-view.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { groupedWarnings, readableNumbers, verdictSummary } from './analysis-verdict.ts';
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
  return analysisFigures(run.result, run.series, studyLimits(run.study), run.study.storageTemperatureC);
}

export function studyLimits(study: { lowerLimit: number | null; upperLimit: number | null }) {
  return {
    ...(study.lowerLimit === null ? {} : { lower: study.lowerLimit }),
    ...(study.upperLimit === null ? {} : { upper: study.upperLimit }),
  };
}

function numberCell(row: ResultRow | undefined): NumberCell {
  if (!row)
    return {
      key: '',
      text: NOT_ESTIMABLE,
      value: '',
      interval: NOT_ESTIMABLE,
      hasInterval: false,
      unit: '',
      note: '',
    };
  const interval =
    row.lower !== null && row.upper !== null ? ([row.lower, row.upper] as [number, number]) : null;
  return {
    key: row.key,
    text: formatSignificant(row.estimate, row.digits),
    value: row.estimate === null ? '' : String(row.estimate),
    interval: formatInterval(interval, Math.max(row.digits - 1, 3)),
    hasInterval: interval !== null,
    unit: row.unit,
    note: readableNumbers(row.note),
  };
}

/**
 * The plausible laws of a series whose order the data do not name, one group per law (its k and
 * times), then the model averages (t90, time to a limit; never k), all from the result rows.
 */
function plausibleView(rows: readonly ResultRow[], seriesId: string) {
  const own = rows.filter((row) => row.section === 'plausible' && row.seriesId === seriesId);
  if (own.length === 0) return null;
  const models = [...new Set(own.map((row) => row.model))].filter((model) => model !== 'average');
  return {
    laws: models.map((model) => ({
      name: MODEL_NAMES[model ?? ''] ?? model,
      rows: own
        .filter((row) => row.model === model)
        .map((row) => ({ label: row.label, cell: numberCell(row) })),
    })),
    averages: own
      .filter((row) => row.model === 'average')
      .map((row) => ({ label: row.label, cell: numberCell(row) })),
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
  const rows = resultRows(analysis);
  const byKey = new Map(rows.map((row) => [row.key, row]));
  const find = (section: string, seriesId: string | null, model: string | null, quantity: string) =>
    numberCell(byKey.get([section, seriesId ?? '*', model ?? '-', quantity].join('|')));
  const figures = runFigures(run);
  const figureIds = new Set(figures.map((figure) => figure.id));
  // Issue 17 §4: each figure's "data" table, from the same stored result as the figure.
  const tables = figureDataTables(run.result, run.series, figures);
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

  const series = analysis.series.map((result, index) => {
    const fitted = result.analysis;
    const reported =
      fitted?.reportedOrder === null || fitted?.reportedOrder === undefined
        ? null
        : String(fitted.reportedOrder);
    const models = (fitted?.models ?? []).map((model) => {
      const name = String(model.order);
      return {
        name: MODEL_NAMES[name] ?? name,
        reported: fitted?.reportedOrder !== null && String(fitted?.reportedOrder) === name,
        applicable: model.applicable,
        reason: readableNumbers(model.reason ?? ''),
        k: find('rate-law', result.id, name, 'k'),
        c0: find('rate-law', result.id, name, 'c0'),
        n: name === 'n' ? find('rate-law', result.id, name, 'n') : null,
        aicc: find('rate-law', result.id, name, 'aicc'),
        weight: find('rate-law', result.id, name, 'weight'),
      };
    });
    const derived = ['half-life', 't90', 'time-to-lower-limit', 'time-to-upper-limit'].flatMap((quantity) => {
      const row = byKey.get(['derived', result.id, reported ?? '-', quantity].join('|'));
      return row ? [{ label: row.label, cell: numberCell(row) }] : [];
    });
    const linearised = (fitted?.linearized ?? []).map((line) => ({
      transform: line.transform,
      cell: find('linearised', result.id, line.transform, 'r-squared'),
    }));
    const derivedCell = (quantity: string) =>
      numberCell(byKey.get(['derived', result.id, reported ?? '-', quantity].join('|')));
    return {
      anchor: `series-${index}`,
      overview: {
        k: reported === null ? null : find('rate-law', result.id, reported, 'k'),
        halfLife: derivedCell('half-life'),
        t90: derivedCell('t90'),
        timeToLower: derivedCell('time-to-lower-limit'),
        timeToUpper: derivedCell('time-to-upper-limit'),
        weights: models.map((model, modelIndex) => ({
          name: ['0', '1', '2', 'n'][modelIndex] ?? '',
          cell: model.weight,
        })),
      },
      id: result.id,
      batch: result.batch ?? '—',
      temperature: result.temperatureC === null ? '—' : `${result.temperatureC} °C`,
      error: result.error?.message ?? null,
      n: fitted?.n ?? 0,
      timeSpan: fitted
        ? `${formatSignificant(fitted.timeSpan[0], 3)} to ${formatSignificant(fitted.timeSpan[1], 3)} ${fitted.timeUnit}`
        : '',
      verdict: readableNumbers(fitted?.verdict ?? ''),
      orderSource:
        fitted?.orderSource === 'analyst'
          ? 'fixed by the analyst'
          : fitted?.orderSource === 'study'
            ? `working order from the study: ${fitted.workingOrderReason ?? ''}`
            : 'from the data',
      plausible: plausibleView(rows, result.id),
      reportedName: reported === null ? 'none named' : MODEL_NAMES[reported],
      errorModel: fitted ? `${fitted.errorModel} (${fitted.errorModelChoice.reason})` : '',
      fractionReacted: formatPercent(fitted?.fractionReacted ?? null),
      derivedReason: fitted?.derivedReason ?? '',
      models,
      derived,
      linearised,
      warnings: (fitted?.warnings ?? []).map((warning) => ({
        code: warning.code,
        message: readableNumbers(warning.message),
      })),
      excluded: (fitted?.excluded ?? []).map((point) => ({
        time: formatSignificant(point.time, 4),
        value: formatSignificant(point.value, 4),
        reason: point.reason,
        cell: point.source?.cell ?? '',
      })),
      figures: ['linearised', 'curves', 'residuals'].flatMap((kind) => {
        const id = `series-${index}-${kind}`;
        return figureIds.has(id) ? [figure(id)] : [];
      }),
      open: index === 0,
    };
  });

  const arrhenius = analysis.arrhenius;
  const arrheniusModel = arrhenius
    ? {
        order: arrhenius.order === null ? 'none' : MODEL_NAMES[String(arrhenius.order)],
        orderSource:
          arrhenius.orderSource === 'analyst'
            ? 'fixed by the analyst'
            : arrhenius.orderSource === 'study'
              ? 'working order from the study, as no series named an order'
              : 'lowest summed AICc',
        noOrderNamed: analysis.warnings.find((warning) => warning.code === 'no-order-named')?.message ?? null,
        notApplicable: arrhenius.notApplicableReason,
        rows: rows
          .filter((row) => row.section === 'arrhenius')
          .map((row) => ({ label: row.label, cell: numberCell(row) })),
        excludedSeries: arrhenius.excludedSeries.map((entry) => ({
          id: entry.id,
          reason: readableNumbers(entry.reason),
        })),
        figure: figure('arrhenius'),
      }
    : null;

  const shelfLife = (analysis.shelfLife ?? []).map((condition) => {
    const id = condition.temperatureC === null ? 'all' : `${condition.temperatureC}C`;
    const row = rows.find(
      (candidate) => candidate.section === 'shelf-life' && candidate.quantity === `shelf-life-${id}`,
    );
    const result = condition.result;
    const figureId = `q1e-${condition.temperatureC === null ? 'all' : String(condition.temperatureC).replace(/[^0-9]/g, '-')}`;
    const timeUnit =
      analysis.series.find((entry) => condition.seriesIds.includes(entry.id))?.analysis?.timeUnit ?? '';
    const proposal = proposalView(condition, timeUnit);
    return {
      condition: condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`,
      proposal,
      series: condition.seriesIds.join(', '),
      scale: { none: 'values (zero order)', ln: 'ln(value) (first order)', '1/x': '1/value (second order)' }[
        condition.transform
      ],
      transformReason: condition.transformReason,
      cell: numberCell(row),
      model: result ? (result.model === 'single-batch' ? 'single batch' : result.model) : '',
      poolability: readableNumbers(
        result?.poolability?.explanation ?? result?.poolabilityNotApplicableReason ?? '',
      ),
      reason: inTimeUnit(readableNumbers(result?.reason ?? condition.notApplicableReason ?? ''), timeUnit),
      // Only the declared long-term condition proposes a shelf life; runs recorded before roles use the storage temperature.
      accelerated: proposal.recorded
        ? !proposal.isLongTerm
        : study.storageTemperatureC !== null &&
          condition.temperatureC !== null &&
          condition.temperatureC !== study.storageTemperatureC,
      beyondData: result?.extrapolation.beyondObservedData === true,
      limiting: result?.limitingLine ?? null,
      figure: figureIds.has(figureId) ? figure(figureId) : null,
    };
  });

  const summary = verdictSummary(analysis, shelfLife, arrheniusModel, options.order);
  const warningGroups = groupedWarnings(analysis);
  const pointCount = run.series.reduce((sum, entry) => sum + entry.observations.length, 0);
  const compactPicker = pointCount > MAX_LISTED_POINTS;
  const points = (compactPicker ? [] : run.series).map((entry, seriesIndex) => ({
    label: entry.id,
    options: entry.observations.map((observation, index) => ({
      value: `${seriesIndex}:${index}`,
      label: `${entry.id} · t = ${formatSignificant(observation.time, 4)} ${entry.timeUnit} · ${formatSignificant(observation.value, 4)} ${entry.valueUnit}${observation.source?.cell ? ` (${observation.source.cell})` : ''}`,
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
  };
}
