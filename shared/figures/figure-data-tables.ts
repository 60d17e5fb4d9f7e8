import type { ConditionShelfLife, DatasetAnalysis } from '../kinetics/analyse-dataset.ts';
import type { SeriesAnalysis } from '../kinetics/analyse-series.ts';
import { rateLawValue } from '../kinetics/order/integrated-rate-law.ts';
import { fromStabilityScale } from '../kinetics/stability/stability-scale.ts';
import { lineValueAt } from '../kinetics/temperature/inverse-temperature-line.ts';
import type { Observation, Series } from '../kinetics/types.ts';
import { type FigureSpec, q1eFigureId } from './analysis-figures.ts';
import { isFormationRate, rateWords, seriesRate } from './arrhenius-rate-words.ts';
import { censoredWords } from './fitted-curves.ts';
import { lawLabels } from './law-standing.ts';
import { observationValue, plotSample } from './plot-sample.ts';
import { MODEL_NAMES } from './results-table.ts';
import { formatSignificant, NOT_ESTIMABLE } from './significant-figures.ts';
import type { StoredAnalysisResult } from './stored-result.ts';

/**
 * The "data" table of each figure of the analysis screen (issue 17 §4): the points the figure
 * draws and, for a fitted line or curve, its fitted value and residual at each observed point, so
 * that a reader who cannot see the figure (or its colours) can read the same numbers.
 *
 * Why: a figure is an image; WCAG 2.1 SC 1.1.1 asks for a text alternative of the same
 * information, and a table of the plotted numbers is that alternative for a chart.
 *
 * Formula in words: every number comes from the stored result the figure is drawn from, never
 * from a new fit: the same points (`plotSample`, so a long series lists the same decimated points), the
 * fitted law C(t; C0, k, n) with the stored parameters (`rateLawValue`, as the curves), the stored
 * residual diagnostics, the stored Arrhenius line (`lineValueAt`) and the stored Q1E lines, whose
 * mean at time t is the back-transformed intercept + slope·t (`fromStabilityScale`, as the grid).
 * Residual = observed − fitted, on the scale the column names.
 *
 * Throws nothing; pure and deterministic. Numbers are written with 4 significant figures.
 *
 * Example: a Q1E plot of batches A and B gives one row per plotted result: "A @ 25 °C", time 3,
 * value 99.1, line "pooled", fitted mean 98.9, residual 0.2.
 */

export interface FigureDataTable {
  caption: string;
  /** Column headings; the first column heads the row headers. */
  columns: string[];
  /** One array of cell texts per row; the first cell is the row's header. */
  rows: string[][];
  /** What the table does not list, or "" (e.g. that a long series is decimated). */
  note: string;
}

const DIGITS = 4;
const number = (value: number | null | undefined) => formatSignificant(value, DIGITS);
const KELVIN_OFFSET = 273.15;

function sampleWords(shown: number, total: number): string {
  return shown === total
    ? ''
    : `The figure draws ${shown} of ${total} points (each interval’s lowest and highest, and every flagged point); this table lists the same points, and every point is in the export.`;
}

/** The value cell of a point: its reported text for a result below a limit ("<LOQ (fitted at 0.02)"). */
function valueText(observation: Observation): string {
  if (!observation.censored) return number(observation.value);
  return observation.excluded
    ? observation.censored.text
    : `${observation.censored.text} (fitted at ${number(observation.value)})`;
}

/** Issue 15 §1: which results reported below a limit the figure leaves out, or "". */
function censoredNotDrawn(seriesList: readonly Series[]): string {
  const left = seriesList.flatMap((series) =>
    series.observations
      .filter((observation) => observation.censored && observation.excluded)
      .map(
        (observation) => `${series.id} at time ${number(observation.time)} (${observation.censored!.text})`,
      ),
  );
  return left.length === 0
    ? ''
    : `Not drawn: ${left.length} result${left.length === 1 ? '' : 's'} reported below a limit and excluded from the fit by the study’s rule: ${left.join('; ')}.`;
}

function joined(...notes: string[]): string {
  return notes.filter((note) => note !== '').join(' ');
}

function linearisedTable(analysis: SeriesAnalysis, series: Series): FigureDataTable {
  const sample = plotSample(
    series.observations.filter((observation) => observation.excluded === undefined),
    {
      valueOf: observationValue,
    },
  );
  const lineOf = (transform: string) => {
    const line = analysis.linearized.find((candidate) => candidate.transform === transform);
    return (time: number) =>
      line && line.slope !== null && line.intercept !== null ? line.intercept + line.slope * time : null;
  };
  const [valueLine, lnLine, inverseLine] = ['value', 'ln(value)', '1/value'].map(lineOf);
  return {
    caption: `Used points of ${series.id} on each scale, with the value of each straight line at their times`,
    columns: [
      `Time (${series.timeUnit})`,
      `Value (${series.valueUnit})`,
      'Line: value',
      'ln(value)',
      'Line: ln(value)',
      '1/value',
      'Line: 1/value',
    ],
    rows: sample.points.map((observation) => {
      const { time, value } = observation;
      return [
        number(time),
        valueText(observation),
        number(valueLine!(time)),
        value > 0 ? number(Math.log(value)) : NOT_ESTIMABLE,
        number(lnLine!(time)),
        value > 0 ? number(1 / value) : NOT_ESTIMABLE,
        number(inverseLine!(time)),
      ];
    }),
    note: joined(sampleWords(sample.shown, sample.total), censoredNotDrawn([series])),
  };
}

function curvesTable(analysis: SeriesAnalysis, series: Series): FigureDataTable {
  const sample = plotSample(series.observations, {
    mustKeep: (observation) => observation.excluded !== undefined || observation.censored !== undefined,
    valueOf: observationValue,
  });
  const laws = lawLabels(analysis).flatMap(({ model: name }) => {
    const model = analysis.models.find((candidate) => String(candidate.order) === name);
    if (!model || model.c0 === null || model.k === null) return [];
    const at = (time: number) => {
      const value = rateLawValue(model.order, model.c0!, model.k!, model.n ?? Number(name), time, null);
      return Number.isFinite(value) ? value : null;
    };
    return [{ name: MODEL_NAMES[name] ?? name, at }];
  });
  return {
    caption: `Points of ${series.id} with the fitted value and residual (value − fitted) of each rate law drawn`,
    columns: [
      `Time (${series.timeUnit})`,
      `Value (${series.valueUnit})`,
      'Point',
      ...laws.flatMap((law) => [`${law.name}: fitted`, `${law.name}: residual`]),
    ],
    rows: sample.points.map((observation) => [
      number(observation.time),
      valueText(observation),
      observation.censored
        ? censoredWords(observation)
        : observation.excluded
          ? `excluded: ${observation.excluded.reason}`
          : 'used',
      ...laws.flatMap((law) => {
        const fitted = law.at(observation.time);
        // A result below the limit left out of the fit has no measured value: its number is the
        // limit itself, so a residual would claim a measurement that was never made.
        const unmeasured = observation.censored !== undefined && observation.excluded !== undefined;
        return [
          number(fitted),
          fitted === null || unmeasured ? NOT_ESTIMABLE : number(observation.value - fitted),
        ];
      }),
    ]),
    note: sampleWords(sample.shown, sample.total),
  };
}

function residualsTable(analysis: SeriesAnalysis, series: Series): FigureDataTable | null {
  const diagnostics = analysis.diagnostics;
  if (!diagnostics) return null;
  const outliers = new Set(diagnostics.possibleOutliers);
  const sample = plotSample(
    diagnostics.points.map((point, index) => ({ point, outlier: outliers.has(index) })),
    { mustKeep: (entry) => entry.outlier, valueOf: (entry) => entry.point.residual },
  );
  const scale = analysis.errorModel === 'proportional' ? 'ln scale' : series.valueUnit;
  return {
    caption: `Residuals of the ${MODEL_NAMES[String(diagnostics.model)]} fit of ${series.id}, with the outlier flag`,
    columns: [
      `Time (${series.timeUnit})`,
      `Value (${series.valueUnit})`,
      `Fitted (${series.valueUnit})`,
      `Residual (${scale})`,
      'Externally studentised residual',
      'Flag',
    ],
    rows: sample.points.map(({ point, outlier }) => [
      number(point.time),
      number(point.value),
      number(point.fitted),
      number(point.residual),
      formatSignificant(point.externallyStudentised, 3),
      outlier ? 'possible outlier' : 'within threshold',
    ]),
    note: sampleWords(sample.shown, sample.total),
  };
}

function arrheniusTable(analysis: DatasetAnalysis): FigureDataTable | null {
  const arrhenius = analysis.arrhenius;
  const fit = arrhenius?.fit;
  if (!arrhenius || !fit || arrhenius.order === null) return null;
  const lineAt = (celsius: number) => lineValueAt(fit.line, 1 / (celsius + KELVIN_OFFSET)).estimate;
  const row = (label: string, celsius: number, lnK: number, interval = NOT_ESTIMABLE) => [
    label,
    `${celsius} °C`,
    number(1000 / (celsius + KELVIN_OFFSET)),
    number(lnK),
    number(lineAt(celsius)),
    number(lnK - lineAt(celsius)),
    interval,
  ];
  const used = new Set(arrhenius.rateConstants.flatMap((point) => point.seriesIds));
  const seriesRows = analysis.series.flatMap((result) => {
    const model = result.analysis?.models.find((candidate) => candidate.order === arrhenius.order);
    // k, or the formation rate −k₀ of an increasing attribute (`arrhenius-rate-words.ts`).
    const value = seriesRate(arrhenius, model?.k);
    if (!used.has(result.id) || result.temperatureC === null || value === null) return [];
    return [row(result.id, result.temperatureC, Math.log(value))];
  });
  const pooledRows = arrhenius.rateConstants.map((point) =>
    row(
      `pooled at ${point.temperatureC} °C (${point.seriesIds.length} series)`,
      point.temperatureC,
      point.lnK,
    ),
  );
  const prediction = arrhenius.prediction;
  const interval = prediction?.confidenceInterval;
  const predictionRows = prediction
    ? [
        [
          `predicted at ${prediction.temperatureC} °C${prediction.extrapolation === null ? '' : ' (extrapolated)'}`,
          `${prediction.temperatureC} °C`,
          number(1000 / (prediction.temperatureC + KELVIN_OFFSET)),
          number(prediction.lnRateConstant),
          number(lineAt(prediction.temperatureC)),
          NOT_ESTIMABLE,
          interval ? `${number(Math.log(interval[0]))} to ${number(Math.log(interval[1]))}` : NOT_ESTIMABLE,
        ],
      ]
    : [];
  const rate = rateWords(arrhenius);
  return {
    caption: isFormationRate(arrhenius)
      ? 'Formation rates k_f (zero order, the attribute increases) against 1000/T, with the fitted line and residual (ln k_f − line)'
      : `Rate constants of the ${MODEL_NAMES[String(arrhenius.order)]} law against 1000/T, with the fitted line and residual (ln k − line)`,
    columns: [
      'Point',
      'Temperature',
      '1000/T (1/K)',
      `ln(${rate.symbol} / ${arrhenius.kUnit ?? `unit of ${rate.symbol}`})`,
      `Line: ${rate.ln}`,
      `Residual (${rate.ln})`,
      `Confidence interval (${rate.ln})`,
    ],
    rows: [...seriesRows, ...pooledRows, ...predictionRows],
    note: '',
  };
}

function q1eTable(condition: ConditionShelfLife, seriesList: readonly Series[]): FigureDataTable | null {
  const result = condition.result;
  if (!result) return null;
  const members = seriesList.filter((series) => condition.seriesIds.includes(series.id));
  const timeUnit = members[0]?.timeUnit ?? '';
  const valueUnit = members[0]?.valueUnit ?? '';
  let shown = 0;
  let total = 0;
  const rows = members.flatMap((series) => {
    const line = result.lines.find((candidate) => candidate.batches.includes(series.id));
    const sample = plotSample(
      series.observations.filter((observation) => observation.excluded === undefined),
      { valueOf: observationValue },
    );
    shown += sample.shown;
    total += sample.total;
    return sample.points.map((observation) => {
      const { time, value } = observation;
      const mean = line
        ? fromStabilityScale(line.interceptAtTimeZero + line.slope * time, condition.transform)
        : null;
      return [
        series.id,
        number(time),
        valueText(observation),
        line?.label ?? NOT_ESTIMABLE,
        number(mean),
        mean === null ? NOT_ESTIMABLE : number(value - mean),
      ];
    });
  });
  return {
    caption: 'Results of each batch with the mean of its regression line and the residual (value − mean)',
    columns: [
      'Batch',
      `Time (${timeUnit})`,
      `Value (${valueUnit})`,
      'Line',
      `Fitted mean (${valueUnit})`,
      'Residual',
    ],
    rows,
    note: joined(sampleWords(shown, total), censoredNotDrawn(members)),
  };
}

/**
 * The data table of each figure, keyed by figure id (`analysisFigures`): the figures name what is
 * drawn, and each table is built from the same stored result and series.
 */
export function figureDataTables(
  stored: StoredAnalysisResult,
  seriesList: readonly Series[],
  figures: readonly FigureSpec[],
): Record<string, FigureDataTable> {
  const { analysis } = stored;
  const tables: Record<string, FigureDataTable> = {};
  for (const figure of figures) {
    const table = tableOf(figure.id, analysis, seriesList);
    if (table) tables[figure.id] = table;
  }
  return tables;
}

function tableOf(
  id: string,
  analysis: DatasetAnalysis,
  seriesList: readonly Series[],
): FigureDataTable | null {
  if (id === 'arrhenius') return arrheniusTable(analysis);
  const condition = (analysis.shelfLife ?? []).find((candidate) => q1eFigureId(candidate) === id);
  if (condition) return q1eTable(condition, seriesList);
  const match = /^series-(\d+)-(linearised|curves|residuals)$/.exec(id);
  const result = match ? analysis.series[Number(match[1])] : undefined;
  const series = seriesList.find((candidate) => candidate.id === result?.id);
  if (!match || !result?.analysis || !series) return null;
  if (match[2] === 'linearised') return linearisedTable(result.analysis, series);
  if (match[2] === 'curves') return curvesTable(result.analysis, series);
  return residualsTable(result.analysis, series);
}
