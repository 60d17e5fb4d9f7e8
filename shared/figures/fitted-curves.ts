import type { SeriesAnalysis } from '../kinetics/analyse-series.ts';
import { rateLawValue } from '../kinetics/order/integrated-rate-law.ts';
import type { Series } from '../kinetics/types.ts';
import {
  FIGURE_CONFIG,
  MODEL_COLOURS,
  PALETTE,
  TOOLTIP_FORMAT,
  timeGrid,
  timeTitle,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import { plotSample, sampleNote } from './plot-sample.ts';
import { MODEL_NAMES } from './results-table.ts';
import type { ConfidenceBand } from './stored-result.ts';

/**
 * The data of one series on its original scale with each fitted rate law's curve and the
 * confidence band of the chosen law, as a Vega-Lite spec.
 *
 * Why: the curves side by side show how little (or how much) the laws differ over the measured
 * span — the honest picture behind the AICc weights — and the band shows how well the chosen
 * curve is known. Excluded points stay on the plot, drawn as red crosses, so nothing vanishes.
 *
 * Formula in words: each law's curve is its integrated rate law C(t; C0, k, n) with the fitted
 * parameters (`rateLawValue`), evaluated on `CURVE_POINTS` even times across the observed span;
 * the band is the engine's mean-curve confidence interval at those times (`confidenceBands`).
 * Laws that could not be fitted are left out of the plot (the table gives the reason).
 *
 * Throws nothing; pure and deterministic.
 *
 * Example: a series fitted by all four laws with first order chosen gives four curves (the
 * first-order one thicker), a shaded band around it, and one point per observation.
 */

export const CURVE_POINTS = 41;

export function fittedCurvesSpec(
  analysis: SeriesAnalysis,
  series: Series,
  band: ConfidenceBand | undefined,
): Record<string, unknown> {
  const [start, end] = analysis.timeSpan;
  const chosen = band
    ? String(band.order)
    : analysis.reportedOrder === null
      ? null
      : String(analysis.reportedOrder);
  const curves = analysis.models.flatMap((model) => {
    if (!model.applicable || model.k === null || model.c0 === null) return [];
    const name = String(model.order);
    const label = `${MODEL_NAMES[name] ?? name}${name === chosen ? ' (chosen)' : ''}`;
    return timeGrid(start, end, CURVE_POINTS).flatMap((time) => {
      const value = rateLawValue(model.order, model.c0!, model.k!, model.n ?? Number(name), time, null);
      return Number.isFinite(value) ? [{ time, value, law: label, chosen: name === chosen }] : [];
    });
  });
  const lawLabels = [...new Set(curves.map((point) => point.law))];
  const lawColours = lawLabels.map((label) => {
    const name = Object.entries(MODEL_NAMES).find(([, words]) => label.startsWith(words))?.[0] ?? '1';
    return MODEL_COLOURS[name] ?? PALETTE.ledger;
  });
  const sample = plotSample(series.observations, (observation) => observation.excluded !== undefined);
  const points = sample.points.map((observation) => ({
    time: observation.time,
    value: observation.value,
    status: observation.excluded ? 'excluded' : 'used',
    reason: observation.excluded?.reason ?? '—',
  }));
  const bandValues = (band?.points ?? []).filter((point) => point.lower !== null && point.upper !== null);
  const percent = Math.round((band?.confidenceLevel ?? analysis.confidenceLevel) * 100);
  const layers: Record<string, unknown>[] = [];
  if (bandValues.length > 1) {
    layers.push({
      data: { values: bandValues },
      mark: { type: 'area', color: MODEL_COLOURS[chosen ?? '1'] ?? PALETTE.ledger, opacity: 0.16 },
      encoding: {
        x: { field: 'time', type: 'quantitative' },
        y: { field: 'lower', type: 'quantitative' },
        y2: { field: 'upper' },
        tooltip: [
          { field: 'time', type: 'quantitative', format: TOOLTIP_FORMAT },
          { field: 'lower', type: 'quantitative', title: `${percent} % CI lower`, format: TOOLTIP_FORMAT },
          { field: 'upper', type: 'quantitative', title: `${percent} % CI upper`, format: TOOLTIP_FORMAT },
        ],
      },
    });
  }
  layers.push(
    {
      data: { values: curves },
      mark: { type: 'line' },
      encoding: {
        x: { field: 'time', type: 'quantitative', title: timeTitle(series.timeUnit) },
        y: {
          field: 'value',
          type: 'quantitative',
          title: `Value (${series.valueUnit})`,
          scale: { zero: false },
        },
        color: {
          field: 'law',
          type: 'nominal',
          title: 'Rate law',
          scale: { domain: lawLabels, range: lawColours },
        },
        strokeWidth: { condition: { test: 'datum.chosen', value: 2.75 }, value: 1.25 },
        strokeDash: { condition: { test: 'datum.chosen', value: [1, 0] }, value: [5, 3] },
      },
    },
    {
      data: { values: points },
      mark: { type: 'point', size: 44 },
      encoding: {
        x: { field: 'time', type: 'quantitative' },
        y: { field: 'value', type: 'quantitative' },
        shape: {
          field: 'status',
          type: 'nominal',
          title: 'Point',
          scale: { domain: ['used', 'excluded'], range: ['circle', 'cross'] },
        },
        fill: {
          field: 'status',
          type: 'nominal',
          scale: { domain: ['used', 'excluded'], range: [PALETTE.ink, PALETTE.alert] },
          legend: null,
        },
        stroke: {
          field: 'status',
          type: 'nominal',
          scale: { domain: ['used', 'excluded'], range: [PALETTE.ink, PALETTE.alert] },
          legend: null,
        },
        tooltip: [
          { field: 'time', type: 'quantitative', format: TOOLTIP_FORMAT },
          { field: 'value', type: 'quantitative', format: TOOLTIP_FORMAT },
          { field: 'status', type: 'nominal' },
          { field: 'reason', type: 'nominal', title: 'reason' },
        ],
      },
    },
  );
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: `Data of ${series.id} with the fitted curve of each rate law and the ${percent} % confidence band of the chosen one.`,
    config: FIGURE_CONFIG,
    width: 620,
    height: 300,
    title: {
      text: 'Data and fitted curves',
      subtitle: `${
        band
          ? `Shaded: ${percent} % confidence band of the ${MODEL_NAMES[String(band.order)]} curve`
          : 'No confidence band (no law chosen)'
      }${sampleNote(sample)}`,
    },
    layer: layers,
    resolve: { scale: { color: 'independent', shape: 'independent' } },
  };
}
