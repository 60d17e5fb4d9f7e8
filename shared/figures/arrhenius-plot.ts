import type { DatasetAnalysis } from '../kinetics/analyse-dataset.ts';
import { lineValueAt } from '../kinetics/temperature/inverse-temperature-line.ts';
import { FORMATION_ORDER_WHY, isFormationRate, rateWords, seriesRate } from './arrhenius-rate-words.ts';
import {
  FIGURE_CONFIG,
  PALETTE,
  SERIES_COLOURS,
  SERIES_SHAPES,
  TOOLTIP_FORMAT,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import { MODEL_NAMES } from './results-table.ts';

/**
 * The Arrhenius plot — ln k against 1000/T — with each series' rate constant, the pooled point per
 * temperature, the fitted line and the rate constant predicted at the storage temperature with its
 * confidence interval, as a Vega-Lite spec.
 *
 * Why: the straightness of this line is the assumption behind every extrapolation from
 * accelerated to long-term conditions; a bent line (another mechanism at high temperature) is
 * visible here before it does harm.
 *
 * Formula in words: x = 1000/T with T = θ/°C + 273.15 in kelvin, y = ln k; the line is the
 * engine's fit ln k = ln k̄ + slope·(1/T − 1/T̄) (`lineValueAt`), drawn from the coldest to the
 * hottest of the fitted and storage temperatures. Reference: IUPAC Gold Book, "Arrhenius
 * equation", doi 10.1351/goldbook.A00446.
 *
 * Throws nothing; returns null when the analysis has no Arrhenius fit.
 *
 * An attribute that increases (engine 0.4.0, `rateSense` 'formation') is plotted on its
 * zero-order formation rate k_f = −k₀ instead: y = ln k_f, in the value unit per time unit, and
 * every label says "formation rate" and "ln k_f" (`arrhenius-rate-words.ts`).
 *
 * Example: four temperatures 25–60 °C give four pooled points on a falling line and a marked
 * prediction at 25 °C.
 */

const KELVIN_OFFSET = 273.15;
/** The analysis screen's words for where the common order comes from. */
const ORDER_SOURCE_WORDS: Record<string, string> = {
  data: 'lowest summed AICc',
  // Issue 12 §3: a working order declared by the study.
  study: 'working order from the study',
  // Engine 0.4.0: the formation rate of an increasing attribute.
  formation: FORMATION_ORDER_WHY,
};
const LINE_POINTS = 25;

export function arrheniusPlotSpec(analysis: DatasetAnalysis): Record<string, unknown> | null {
  const arrhenius = analysis.arrhenius;
  const fit = arrhenius?.fit;
  if (!arrhenius || !fit || arrhenius.order === null) return null;
  const inverse = (celsius: number) => 1000 / (celsius + KELVIN_OFFSET);
  const rate = rateWords(arrhenius);
  // Only the series the fit used: a series the table lists as left out stays off the plot.
  const used = new Set(arrhenius.rateConstants.flatMap((point) => point.seriesIds));
  const seriesPoints = analysis.series.flatMap((result) => {
    const model = result.analysis?.models.find((candidate) => candidate.order === arrhenius.order);
    // The rate the series gave the line: k, or the formation rate −k₀ of an increasing attribute.
    const value = seriesRate(arrhenius, model?.k);
    if (!used.has(result.id) || result.temperatureC === null || value === null) return [];
    return [
      {
        x: inverse(result.temperatureC),
        lnK: Math.log(value),
        series: result.id,
        batch: result.batch ?? result.id,
        temperature: `${result.temperatureC} °C`,
      },
    ];
  });
  const batches = [...new Set(seriesPoints.map((point) => point.batch))];
  const pooled = arrhenius.rateConstants.map((point) => ({
    x: inverse(point.temperatureC),
    lnK: point.lnK,
    temperature: `${point.temperatureC} °C`,
    seriesCount: point.seriesIds.length,
  }));
  const prediction = arrhenius.prediction;
  const temperatures = [...fit.temperatureRangeC, ...(prediction ? [prediction.temperatureC] : [])];
  const coldest = Math.min(...temperatures);
  const hottest = Math.max(...temperatures);
  const line = Array.from({ length: LINE_POINTS }, (_, i) => {
    const celsius = coldest + ((hottest - coldest) * i) / (LINE_POINTS - 1);
    return { x: inverse(celsius), lnK: lineValueAt(fit.line, 1 / (celsius + KELVIN_OFFSET)).estimate };
  });
  const layers: Record<string, unknown>[] = [
    {
      data: { values: line },
      mark: { type: 'line', color: PALETTE.ledger, strokeWidth: 2 },
      encoding: {
        x: { field: 'x', type: 'quantitative', title: '1000/T (1/K)', scale: { zero: false, padding: 24 } },
        y: {
          field: 'lnK',
          type: 'quantitative',
          title: `ln(${rate.symbol} / ${arrhenius.kUnit ?? `unit of ${rate.symbol}`})`,
          scale: { zero: false, padding: 24 },
        },
      },
    },
    {
      data: { values: seriesPoints },
      mark: { type: 'point', size: 40, opacity: 0.7 },
      encoding: {
        x: { field: 'x', type: 'quantitative' },
        y: { field: 'lnK', type: 'quantitative' },
        color: {
          field: 'batch',
          type: 'nominal',
          title: 'Batch',
          scale: { domain: batches, range: SERIES_COLOURS },
        },
        // Issue 17 §4: a shape per batch as well as a colour (hollow, unlike the filled pooled diamonds).
        shape: {
          field: 'batch',
          type: 'nominal',
          title: 'Batch',
          scale: { domain: batches, range: SERIES_SHAPES },
        },
        tooltip: [
          { field: 'series', type: 'nominal' },
          { field: 'temperature', type: 'nominal' },
          { field: 'lnK', type: 'quantitative', title: rate.ln, format: TOOLTIP_FORMAT },
        ],
      },
    },
    {
      data: { values: pooled },
      mark: { type: 'point', shape: 'diamond', filled: true, size: 90, color: PALETTE.ink },
      encoding: {
        x: { field: 'x', type: 'quantitative' },
        y: { field: 'lnK', type: 'quantitative' },
        tooltip: [
          { field: 'temperature', type: 'nominal' },
          { field: 'lnK', type: 'quantitative', title: `pooled ${rate.ln}`, format: TOOLTIP_FORMAT },
          { field: 'seriesCount', type: 'quantitative', title: 'series' },
        ],
      },
    },
    {
      data: { values: pooled },
      mark: { type: 'text', dy: -14, fontSize: 11, color: PALETTE.inkMuted },
      encoding: {
        x: { field: 'x', type: 'quantitative' },
        y: { field: 'lnK', type: 'quantitative' },
        text: { field: 'temperature' },
      },
    },
  ];
  if (prediction) {
    const interval = prediction.confidenceInterval;
    const predicted = [
      {
        x: inverse(prediction.temperatureC),
        lnK: prediction.lnRateConstant,
        low: interval ? Math.log(interval[0]) : prediction.lnRateConstant,
        high: interval ? Math.log(interval[1]) : prediction.lnRateConstant,
        label: `predicted at ${prediction.temperatureC} °C${prediction.extrapolation === null ? '' : ' (extrapolated)'}`,
      },
    ];
    layers.push(
      {
        data: { values: predicted },
        mark: { type: 'rule', color: PALETTE.alert, strokeWidth: 2 },
        encoding: {
          x: { field: 'x', type: 'quantitative' },
          y: { field: 'low', type: 'quantitative' },
          y2: { field: 'high' },
        },
      },
      {
        data: { values: predicted },
        mark: { type: 'point', shape: 'square', filled: true, size: 70, color: PALETTE.alert },
        encoding: {
          x: { field: 'x', type: 'quantitative' },
          y: { field: 'lnK', type: 'quantitative' },
          tooltip: [
            { field: 'label', type: 'nominal', title: rate.symbol },
            { field: 'lnK', type: 'quantitative', title: rate.ln, format: TOOLTIP_FORMAT },
            { field: 'low', type: 'quantitative', title: `CI lower (${rate.ln})`, format: TOOLTIP_FORMAT },
            { field: 'high', type: 'quantitative', title: `CI upper (${rate.ln})`, format: TOOLTIP_FORMAT },
          ],
        },
      },
      {
        data: { values: predicted },
        mark: { type: 'text', dy: 18, align: 'center', fontSize: 11, color: PALETTE.alert },
        encoding: {
          x: { field: 'x', type: 'quantitative' },
          y: { field: 'lnK', type: 'quantitative' },
          text: { field: 'label' },
        },
      },
    );
  }
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: isFormationRate(arrhenius)
      ? `Arrhenius plot: ln k_f, the zero-order formation rate of an attribute that increases (${orderNote(analysis)}), against 1000/T with the fitted line${prediction ? ' and the predicted formation rate' : ''}.`
      : `Arrhenius plot: ln k of the ${MODEL_NAMES[String(arrhenius.order)]} law (${orderNote(analysis)}) against 1000/T with the fitted line${prediction ? ' and the predicted rate constant' : ''}.`,
    config: FIGURE_CONFIG,
    width: 560,
    height: 300,
    title: {
      text: 'Arrhenius plot',
      subtitle: [
        isFormationRate(arrhenius)
          ? `Formation rates k_f in ${arrhenius.kUnit ?? 'the value unit per time unit'} (${orderNote(analysis)}).`
          : `${capitalised(MODEL_NAMES[String(arrhenius.order)] ?? '')} rate constants (${orderNote(analysis)}).`,
        `Diamonds: pooled per temperature${prediction ? '; red: prediction with its confidence interval' : ''}.`,
      ],
    },
    layer: layers,
  };
}

const capitalised = (text: string) => `${text.charAt(0).toUpperCase()}${text.slice(1)}`;

/**
 * Which order the rate constants come from and why, in the table's words ("fixed by the analyst",
 * "lowest summed AICc"), and how many series named that order themselves — "no series named it"
 * when none did, so the plot never reads as if the data had decided the order.
 */
function orderNote(analysis: DatasetAnalysis): string {
  const arrhenius = analysis.arrhenius!;
  if (arrhenius.orderSource === 'analyst') return 'order fixed by the analyst';
  // Zero order by rule: what the series named is no part of it.
  if (arrhenius.orderSource === 'formation') return ORDER_SOURCE_WORDS.formation!;
  const analysed = analysis.series.filter((result) => result.analysis);
  const naming = analysed.filter((result) => result.analysis!.reportedOrder === arrhenius.order).length;
  const source = ORDER_SOURCE_WORDS[String(arrhenius.orderSource)] ?? 'order of the analysis';
  return `${source}; ${naming === 0 ? 'no series named it' : `named by ${naming} of ${analysed.length} series`}`;
}
