import type { SeriesAnalysis } from '../kinetics/analyse-series.ts';
import type { Series } from '../kinetics/types.ts';
import {
  FIGURE_CONFIG,
  OUTLIER_SHAPE,
  PALETTE,
  TOOLTIP_FORMAT,
  timeTitle,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import { namedLaw } from './law-standing.ts';
import { plotSample, sampleNote } from './plot-sample.ts';
import { MODEL_NAMES } from './results-table.ts';

/**
 * Residuals of the diagnosed fit against time, as a Vega-Lite spec, with possible outliers as red
 * triangles (a shape of their own, so they stand out without colour; issue 17 §4).
 * The diagnosed law is the one the results table names; when it names none, the engine diagnoses
 * the lowest-AICc integer law, and the subtitle says so rather than calling it chosen.
 *
 * Why: a curved or trending band of residuals says the law misses the shape of the data; a lone
 * point far from zero is a possible outlier to investigate (never dropped by the program).
 *
 * Formula in words: residual = value − fitted value (or ln value − ln fitted for the proportional
 * error model), from the engine's residual diagnostics; a point is marked when its externally
 * studentised residual exceeds the engine's outlier threshold.
 *
 * Throws nothing; returns null when the series has no diagnosed fit.
 *
 * Example: a well-fitted series gives points scattered around the zero line, none marked.
 */
export function residualPlotSpec(analysis: SeriesAnalysis, series: Series): Record<string, unknown> | null {
  const diagnostics = analysis.diagnostics;
  if (!diagnostics) return null;
  const outliers = new Set(diagnostics.possibleOutliers);
  const indexed = diagnostics.points.map((point, index) => ({ point, outlier: outliers.has(index) }));
  const sample = plotSample(indexed, {
    mustKeep: (entry) => entry.outlier,
    valueOf: (entry) => entry.point.residual,
  });
  const points = sample.points.map(({ point, outlier }) => ({
    time: point.time,
    residual: point.residual,
    studentised: point.externallyStudentised,
    flag: outlier ? 'possible outlier' : 'within threshold',
  }));
  const scale = analysis.errorModel === 'proportional' ? 'ln scale' : series.valueUnit;
  const model = String(diagnostics.model);
  const named = namedLaw(analysis);
  // The engine diagnoses the lowest-AICc integer law (lowest RSS when AICc is undefined) when the
  // named law could not be fitted or none is named.
  const ranking =
    analysis.selection.aicc[diagnostics.model === 'n' ? 3 : diagnostics.model] == null
      ? 'smallest residual sum of squares of the integer laws'
      : 'lowest AICc of the integer laws';
  const law =
    named?.model === model
      ? `${MODEL_NAMES[model]} fit (${named.because})`
      : `${MODEL_NAMES[model]} fit (${ranking}; ${named ? `the named ${MODEL_NAMES[named.model]} law could not be fitted` : 'no order named'})`;
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: `Residuals of the ${law} of ${series.id} against time.`,
    config: FIGURE_CONFIG,
    width: 620,
    height: 180,
    title: {
      text: 'Residuals against time',
      subtitle: [
        `${law.charAt(0).toUpperCase()}${law.slice(1)}.`,
        diagnostics.outlierThreshold === null
          ? `No outlier test: too few points${sampleNote(sample)}.`
          : `Red triangles: |externally studentised residual| > ${diagnostics.outlierThreshold.toPrecision(3)} (Bonferroni-corrected t)${sampleNote(sample)}.`,
      ],
    },
    layer: [
      {
        data: { values: [{ zero: 0 }] },
        mark: { type: 'rule', color: PALETTE.inkMuted, strokeDash: [4, 3] },
        encoding: { y: { field: 'zero', type: 'quantitative' } },
      },
      {
        data: { values: points },
        mark: { type: 'point', filled: true },
        encoding: {
          x: { field: 'time', type: 'quantitative', title: timeTitle(series.timeUnit) },
          y: { field: 'residual', type: 'quantitative', title: `Residual (${scale})` },
          color: {
            field: 'flag',
            type: 'nominal',
            title: null,
            scale: { domain: ['within threshold', 'possible outlier'], range: [PALETTE.ink, PALETTE.alert] },
          },
          shape: {
            field: 'flag',
            type: 'nominal',
            title: null,
            scale: { domain: ['within threshold', 'possible outlier'], range: ['circle', OUTLIER_SHAPE] },
          },
          size: { condition: { test: "datum.flag === 'possible outlier'", value: 110 }, value: 56 },

          tooltip: [
            { field: 'time', type: 'quantitative', format: TOOLTIP_FORMAT },
            { field: 'residual', type: 'quantitative', format: TOOLTIP_FORMAT },
            { field: 'studentised', type: 'quantitative', title: 'studentised', format: '.3~g' },
          ],
        },
      },
    ],
  };
}
