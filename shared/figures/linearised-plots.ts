import type { SeriesAnalysis } from '../kinetics/analyse-series.ts';
import type { Series } from '../kinetics/types.ts';
import {
  FIGURE_CONFIG,
  MODEL_COLOURS,
  PALETTE,
  TOOLTIP_FORMAT,
  timeTitle,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import { observationValue, plotSample, sampleNote } from './plot-sample.ts';
import { formatSignificant } from './significant-figures.ts';

/**
 * The three classical straight-line plots of one series side by side — value, ln(value) and
 * 1/value against time — each with its least-squares line and R² in the title, as a Vega-Lite spec.
 *
 * Why: chemists look at these first; drawn together they show at a glance which transform
 * straightens the data (and, with little conversion, that none does better than the others).
 * The order decision does not rest on them (Motulsky & Christopoulos 2003, "Avoid Scatchard,
 * Lineweaver-Burk and similar transforms"; docs/methods.md#straight-line-plots); the screen says so.
 *
 * Formula in words: each panel plots the transformed used points and the line
 * intercept + slope·t from the engine's `linearized` fits, drawn between the first and last time.
 * A plot that is not applicable (non-positive values) shows its reason instead of a line.
 *
 * Throws nothing; pure and deterministic (same result in, same spec out).
 *
 * Example: a first-order series gives three panels titled "Value · R² = 0.9712",
 * "ln(value) · R² = 0.9998", "1/value · R² = 0.9690".
 */

const PANEL_WIDTH = 250;
const PANEL_HEIGHT = 190;

const TRANSFORMS = [
  { transform: 'value', title: 'Value', apply: (value: number) => value },
  {
    transform: 'ln(value)',
    title: 'ln(value)',
    apply: (value: number) => (value > 0 ? Math.log(value) : null),
  },
  { transform: '1/value', title: '1/value', apply: (value: number) => (value > 0 ? 1 / value : null) },
] as const;

export function linearisedPlotsSpec(analysis: SeriesAnalysis, series: Series): Record<string, unknown> {
  const sample = plotSample(
    series.observations.filter((observation) => observation.excluded === undefined),
    {
      // C, ln C and 1/C are monotone in C: the extremes of C are those of every panel.
      valueOf: observationValue,
    },
  );
  const used = sample.points;
  const [start, end] = analysis.timeSpan;
  const panels = TRANSFORMS.map((entry, order) => {
    const line = analysis.linearized.find((candidate) => candidate.transform === entry.transform);
    const points = used.flatMap((observation) => {
      const y = entry.apply(observation.value);
      return y === null ? [] : [{ time: observation.time, y }];
    });
    const yTitle =
      entry.transform === 'value'
        ? `Value (${series.valueUnit})`
        : entry.transform === 'ln(value)'
          ? `ln(value / ${series.valueUnit})`
          : `1/value (1/${series.valueUnit})`;
    const fitted =
      line && line.slope !== null && line.intercept !== null
        ? [start, end].map((time) => ({ time, y: line.intercept! + line.slope! * time }))
        : [];
    const rSquared = line?.rSquared ?? null;
    const subtitle = !line
      ? 'not computed'
      : line.rSquared === null
        ? `not applicable: ${line.reason ?? 'no line'}`
        : `R² = ${formatSignificant(rSquared, 4)}${line.applicable ? '' : ' · runs the wrong way for this law'}`;
    const colour = MODEL_COLOURS[String(order)] ?? PALETTE.ledger;
    return {
      title: { text: entry.title, subtitle },
      width: PANEL_WIDTH,
      height: PANEL_HEIGHT,
      layer: [
        {
          data: { values: points },
          mark: { type: 'point', filled: true, color: PALETTE.ink, opacity: 0.85 },
          encoding: {
            x: { field: 'time', type: 'quantitative', title: timeTitle(series.timeUnit) },
            y: { field: 'y', type: 'quantitative', title: yTitle, scale: { zero: false } },
            tooltip: [
              { field: 'time', type: 'quantitative', title: 'time', format: TOOLTIP_FORMAT },
              { field: 'y', type: 'quantitative', title: entry.title, format: TOOLTIP_FORMAT },
            ],
          },
        },
        {
          data: { values: fitted },
          mark: { type: 'line', color: colour, strokeWidth: 2 },
          encoding: {
            x: { field: 'time', type: 'quantitative' },
            y: { field: 'y', type: 'quantitative' },
          },
        },
      ],
    };
  });
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: `Straight-line plots of value, ln(value) and 1/value against time for ${series.id}${sampleNote(sample)}.`,
    config: FIGURE_CONFIG,
    hconcat: panels,
    spacing: 24,
  };
}
