import type { SeriesAnalysis } from '../kinetics/analyse-series.ts';
import { rateLawValue } from '../kinetics/order/integrated-rate-law.ts';
import type { Observation, Series } from '../kinetics/types.ts';
import {
  FIGURE_CONFIG,
  MODEL_COLOURS,
  MODEL_DASHES,
  PALETTE,
  TOOLTIP_FORMAT,
  timeGrid,
  timeTitle,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import {
  type LawEmphasis,
  lawLabels,
  type NamedLaw,
  namedLaw,
  PLAUSIBLE_DELTA_AICC,
  PLAUSIBLE_WEIGHT,
} from './law-standing.ts';
import { observationValue, plotSample, sampleNote } from './plot-sample.ts';
import { MODEL_NAMES } from './results-table.ts';
import type { ConfidenceBand } from './stored-result.ts';

/**
 * The data of one series on its original scale with each fitted rate law's curve and, when the
 * results table names an order, the confidence band of that law, as a Vega-Lite spec.
 *
 * Why: the curves side by side show how little (or how much) the laws differ over the measured
 * span — the honest picture behind the AICc weights — and the band shows how well the named
 * curve is known. The figure claims no more than the table (`law-standing.ts`): a law is
 * "chosen" (or "fixed by the analyst") only when the table names it; when it says "none named"
 * the plausible laws are drawn alike with their weights and nothing is shaded. Excluded points
 * stay on the plot, drawn as red crosses, so nothing vanishes.
 *
 * Formula in words: each law's curve is its integrated rate law C(t; C0, k, n) with the fitted
 * parameters (`rateLawValue`), evaluated on `CURVE_POINTS` even times across the observed span;
 * the band is the engine's mean-curve confidence interval at those times (`confidenceBands`).
 * Laws that could not be fitted are left out of the plot (the table gives the reason).
 *
 * Throws nothing; pure and deterministic.
 *
 * Example: a series fitted by all four laws with first order chosen gives four curves (the
 * first-order one thicker, labelled "first order (chosen)"), a shaded band around it, and one
 * point per observation; with no order named, the same curves labelled e.g. "first order
 * (plausible, weight 0.355)" and no band.
 */

export const CURVE_POINTS = 41;

/**
 * Line width of each kind of law: the named one boldest, plausible ones medium, the rest thin.
 * The dash belongs to the law itself (`MODEL_DASHES`, issue 17 §4), so laws differ without colour.
 */
const EMPHASIS: Record<LawEmphasis, { width: number }> = {
  named: { width: 3 },
  plausible: { width: 2.25 },
  other: { width: 1 },
};

export function fittedCurvesSpec(
  analysis: SeriesAnalysis,
  series: Series,
  band: ConfidenceBand | undefined,
): Record<string, unknown> {
  const [start, end] = analysis.timeSpan;
  const named = namedLaw(analysis);
  const labels = lawLabels(analysis);
  const curves = labels.flatMap(({ model: name, label, emphasis }) => {
    const model = analysis.models.find((candidate) => String(candidate.order) === name)!;
    return timeGrid(start, end, CURVE_POINTS).flatMap((time) => {
      const value = rateLawValue(model.order, model.c0!, model.k!, model.n ?? Number(name), time, null);
      return Number.isFinite(value) ? [{ time, value, law: label, emphasis }] : [];
    });
  });
  const drawn = new Set(curves.map((point) => point.law));
  const legend = labels.filter((entry) => drawn.has(entry.label));
  const lawLabelsDrawn = legend.map((entry) => entry.label);
  const lawColours = legend.map((entry) => MODEL_COLOURS[entry.model] ?? PALETTE.ledger);
  // The band belongs to the law the table names. A run stores the lowest-AICc law's band when no
  // order is named; it is not drawn, since shading one law would single it out as the answer.
  // One column without a named order: the labels then carry the weights and are long.
  // Stroke symbols √900 = 30 px long, so the legend shows each law's dash.
  const lineSymbols = { symbolType: 'stroke', symbolSize: 900 };
  const lawLegend = named ? { columns: 2, ...lineSymbols } : { columns: 1, labelLimit: 360, ...lineSymbols };
  const namedBand = named && band && String(band.order) === named.model ? band : undefined;
  const sample = plotSample(series.observations, {
    mustKeep: (observation) => observation.excluded !== undefined || observation.censored !== undefined,
    valueOf: observationValue,
  });
  const points = sample.points.map((observation) => ({
    time: observation.time,
    value: observation.value,
    status: observation.censored ? CENSORED_STATUS : observation.excluded ? 'excluded' : 'used',
    reason: observation.censored ? censoredWords(observation) : (observation.excluded?.reason ?? '—'),
  }));
  // Issue 15 §1: results reported below a limit get a shape of their own (only when there are any,
  // so the figures of series without such results are unchanged).
  const censored = points.some((point) => point.status === CENSORED_STATUS);
  const statuses = censored ? ['used', 'excluded', CENSORED_STATUS] : ['used', 'excluded'];
  const statusColours = censored
    ? [PALETTE.ink, PALETTE.alert, PALETTE.ledger]
    : [PALETTE.ink, PALETTE.alert];
  const bandValues = (namedBand?.points ?? []).filter(
    (point) => point.lower !== null && point.upper !== null,
  );
  const percent = Math.round((namedBand?.confidenceLevel ?? analysis.confidenceLevel) * 100);
  const layers: Record<string, unknown>[] = [];
  if (bandValues.length > 1) {
    layers.push({
      data: { values: bandValues },
      mark: { type: 'area', color: MODEL_COLOURS[named?.model ?? '1'] ?? PALETTE.ledger, opacity: 0.16 },
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
          scale: { domain: lawLabelsDrawn, range: lawColours },
          legend: lawLegend,
        },
        // Width and dash by law too, so the legend's symbols show each law's dash and weight.
        strokeWidth: {
          field: 'law',
          type: 'nominal',
          sort: lawLabelsDrawn,
          title: 'Rate law',
          scale: { domain: lawLabelsDrawn, range: legend.map((entry) => EMPHASIS[entry.emphasis].width) },
          legend: lawLegend,
        },
        strokeDash: {
          field: 'law',
          type: 'nominal',
          title: 'Rate law',
          scale: {
            domain: lawLabelsDrawn,
            range: legend.map((entry) => MODEL_DASHES[entry.model] ?? [1, 0]),
          },
          legend: lawLegend,
        },
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
          scale: {
            domain: statuses,
            range: censored ? ['circle', 'cross', 'triangle-down'] : ['circle', 'cross'],
          },
        },
        fill: {
          field: 'status',
          type: 'nominal',
          scale: { domain: statuses, range: statusColours },
          legend: null,
        },
        stroke: {
          field: 'status',
          type: 'nominal',
          scale: { domain: statuses, range: statusColours },
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
  const note = [
    ...curvesNote(analysis, named, bandValues.length > 1, percent),
    ...(censored ? [CENSORED_NOTE] : []),
  ];
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: `Data of ${series.id} with the fitted curve of each rate law. ${note.join(' ')}`,
    config: FIGURE_CONFIG,
    width: 620,
    height: 300,
    title: {
      text: 'Data and fitted curves',
      subtitle: sampleNote(sample) === '' ? note : [...note, sampleNote(sample).replace(/^ · s/, 'S')],
    },
    layer: layers,
    resolve: {
      scale: {
        color: 'independent',
        shape: 'independent',
        strokeDash: 'independent',
        strokeWidth: 'independent',
      },
    },
  };
}

/** The status of a point reported below a limit ("<LOQ"), in the legend and the data table. */
export const CENSORED_STATUS = 'below limit';
const CENSORED_NOTE =
  'Triangles pointing down: results reported below a limit, drawn at the limit (or 0); the study’s rule decides whether they are fitted.';

/** How a result reported below a limit is shown in words: its text and what the fit did with it. */
export function censoredWords(observation: Observation): string {
  const text = observation.censored?.text ?? '';
  if (!observation.excluded) return `reported as ${text}: fitted at ${observation.value} by the study’s rule`;
  const reason = observation.excluded.reason;
  return reason.includes(text) ? reason : `reported as ${text}; excluded: ${reason}`;
}

/** The subtitle lines: which law the table names and what is shaded, or why no law is singled out. */
function curvesNote(
  analysis: SeriesAnalysis,
  named: NamedLaw | null,
  shaded: boolean,
  percent: number,
): string[] {
  if (named) {
    const words = `Order named: ${MODEL_NAMES[named.model]} (${named.because}).`;
    return shaded
      ? [`${words} Shaded: ${percent} % confidence band of its curve.`]
      : [`${words} No confidence band (${analysis.derivedReason ?? 'no interval for its curve'}).`];
  }
  const ranked = analysis.models.some((model) => model.applicable && model.aicc !== null);
  return ranked
    ? [
        `No order named. Thick lines: the plausible laws (Akaike weight ≥ ${PLAUSIBLE_WEIGHT} or ΔAICc ≤ ${PLAUSIBLE_DELTA_AICC});`,
        'thin: the others. Each law has its own dash. No confidence band, since no law is chosen.',
      ]
    : [
        'No order named: too few points to rank the laws by AICc. No confidence band, since no law is chosen.',
      ];
}
