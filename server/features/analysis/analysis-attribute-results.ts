import { q1eFigureId } from '../../../shared/figures/analysis-figures.ts';
import { FORMATION_ORDER_WHY, isFormationRate } from '../../../shared/figures/arrhenius-rate-words.ts';
import type { FigureDataTable } from '../../../shared/figures/figure-data-tables.ts';
import { MODEL_NAMES, type ResultRow, resultRows } from '../../../shared/figures/results-table.ts';
import {
  formatInterval,
  formatPercent,
  formatSignificant,
  NOT_ESTIMABLE,
} from '../../../shared/figures/significant-figures.ts';
import { inTimeUnit } from '../../../shared/figures/time-unit-words.ts';
import type { DatasetAnalysis } from '../../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { proposalView } from './analysis-proposal-view.ts';
import { readableNumbers } from './analysis-verdict.ts';
import type { NumberCell } from './number-cell.ts';

/**
 * The results of one attribute as the analysis page shows them: the row of each series (and its
 * own section), the Q1E outcome of each condition, the Arrhenius result, each with its figures.
 * The study's first attribute is shown with ids as they always were (`prefix` ''); each further
 * attribute of a multi-attribute run uses the same model under its own prefix ("attribute-1-"),
 * so anchors and figure ids stay unique on the page (`attribute-figures.ts` names its figures so).
 */

export interface PageFigure {
  id: string;
  title: string;
  description: string;
  group: string;
  table: FigureDataTable | null;
}

export interface AttributeResultsInput {
  analysis: DatasetAnalysis;
  /** The dataset's series (every attribute's): used to show a censored result by its text. */
  series: readonly Series[];
  /** Figure ids present for this run (with their prefix), and each figure as the page shows it. */
  figureIds: ReadonlySet<string>;
  figure: (id: string) => PageFigure | null;
  storageTemperatureC: number | null;
  prefix: string;
}

export function numberCell(row: ResultRow | undefined): NumberCell {
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

/** The per-series, Q1E and Arrhenius parts of one attribute's results. */
export function attributeResults(input: AttributeResultsInput) {
  const { analysis, figureIds, figure, prefix } = input;
  const study = { storageTemperatureC: input.storageTemperatureC };
  const censoredText = censoredLookup(input.series);
  const rows = resultRows(analysis);
  const byKey = new Map(rows.map((row) => [row.key, row]));
  const find = (section: string, seriesId: string | null, model: string | null, quantity: string) =>
    numberCell(byKey.get([section, seriesId ?? '*', model ?? '-', quantity].join('|')));

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
      anchor: `${prefix}series-${index}`,
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
        value: censoredText(result.id, point) ?? formatSignificant(point.value, 4),
        reason: point.reason,
        cell: point.source?.cell ?? '',
      })),
      figures: ['linearised', 'curves', 'residuals'].flatMap((kind) => {
        const id = `${prefix}series-${index}-${kind}`;
        return figureIds.has(id) ? [figure(id)] : [];
      }),
      open: index === 0 && prefix === '',
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
              : arrhenius.orderSource === 'formation'
                ? FORMATION_ORDER_WHY
                : 'lowest summed AICc',
        // Engine 0.4.0: the line is of the formation rate of an increasing attribute (an analyst's
        // order 1 or 2 there is refused, with the reason in notApplicable); absent (not false) for
        // a loss, so that the page model of a falling attribute reads as before.
        formation:
          isFormationRate(arrhenius) && arrhenius.order === 0
            ? { unit: arrhenius.kUnit ?? 'the value unit per time unit' }
            : undefined,
        noOrderNamed: analysis.warnings.find((warning) => warning.code === 'no-order-named')?.message ?? null,
        notApplicable: arrhenius.notApplicableReason,
        rows: rows
          .filter((row) => row.section === 'arrhenius')
          .map((row) => ({ label: row.label, cell: numberCell(row) })),
        excludedSeries: arrhenius.excludedSeries.map((entry) => ({
          id: entry.id,
          reason: readableNumbers(entry.reason),
        })),
        figure: figure(`${prefix}arrhenius`),
      }
    : null;

  const shelfLife = (analysis.shelfLife ?? []).map((condition) => {
    const id = condition.temperatureC === null ? 'all' : `${condition.temperatureC}C`;
    const row = rows.find(
      (candidate) => candidate.section === 'shelf-life' && candidate.quantity === `shelf-life-${id}`,
    );
    const result = condition.result;
    const figureId = `${prefix}${q1eFigureId(condition)}`;
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

  return { rows, series, arrhenius: arrheniusModel, shelfLife };
}

/** The text a cell reported below a limit ("<LOQ"), for a point the engine lists as excluded. */
function censoredLookup(seriesList: readonly Series[]) {
  return (seriesId: string, point: { time: number; source?: { cell?: string } }): string | null => {
    const series = seriesList.find((candidate) => candidate.id === seriesId);
    const observation = series?.observations.find(
      (candidate) =>
        candidate.censored !== undefined &&
        candidate.time === point.time &&
        (candidate.source?.cell ?? '') === (point.source?.cell ?? ''),
    );
    return observation?.censored?.text ?? null;
  };
}
