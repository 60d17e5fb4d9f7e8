import type { ConditionShelfLife, SeriesResult } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import {
  cycled,
  FIGURE_CONFIG,
  PALETTE,
  SERIES_COLOURS,
  SERIES_DASHES,
  SERIES_SHAPES,
  TOOLTIP_FORMAT,
  timeTitle,
  VEGA_LITE_SCHEMA,
} from './figure-config.ts';
import { observationValue, plotSample, sampleNote } from './plot-sample.ts';
import { formatSignificant } from './significant-figures.ts';

/**
 * The ICH Q1E shelf-life plot of one storage condition: each batch's results, the mean regression
 * line(s), the one-sided (or two-sided) confidence limit, the acceptance criterion and the time at
 * which the limit is first met, as a Vega-Lite spec.
 *
 * Why: ICH Q1E App. B asks for the shelf life where the confidence limit of the mean meets the
 * acceptance criterion; this is the picture of that rule, and of whether batches were pooled.
 *
 * Formula in words: mean and confidence limit come from the engine's grid for each line
 * (back-transformed to the attribute's scale); the vertical rule marks `result.shelfLife`.
 * Reference: ICH Q1E (2003) App. B.1, Figure 1 (the picture this reproduces in spirit).
 *
 * Throws nothing; returns null when the condition has no Q1E result.
 *
 * Example: three pooled batches with a lower limit of 95 give one mean line, its lower 95 %
 * confidence limit, the limit at 95 and a rule at the crossing, e.g. "shelf life estimate 31.4 month".
 */
/** The scale words of the analysis screen, and the order each scale stands for. */
const SCALES: Record<string, { words: string; order: number; law: string }> = {
  none: { words: 'values', order: 0, law: 'zero order' },
  ln: { words: 'ln(value)', order: 1, law: 'first order' },
  '1/x': { words: '1/value', order: 2, law: 'second order' },
};

/**
 * The regression scale and why, as the table gives it: the order's scale when the analyst fixed
 * it or every batch named it; otherwise the values, as Q1E's default — not a zero-order claim.
 */
function scaleNote(condition: ConditionShelfLife, results: readonly SeriesResult[]): string {
  const scale = SCALES[condition.transform];
  if (!scale) return `Scale: ${condition.transform}`;
  const members = results.filter((result) => condition.seriesIds.includes(result.id));
  if (members.some((result) => result.analysis?.orderSource === 'analyst'))
    return `Scale: ${scale.words} (${scale.law}, fixed by the analyst)`;
  if (members.length > 0 && members.every((result) => result.analysis?.reportedOrder === scale.order))
    return `Scale: ${scale.words} (${scale.law}, named by every batch)`;
  return `Scale: ${scale.words} (ICH Q1E default: no order named for every batch)`;
}

/** A legend of line symbols long enough to show each dash (a stroke symbol is √size pixels long). */
const LINE_LEGEND = { symbolType: 'stroke', symbolSize: 900, symbolStrokeWidth: 2 };

export function q1ePlotSpec(
  condition: ConditionShelfLife,
  seriesList: readonly Series[],
  limits: { lower?: number; upper?: number },
  results: readonly SeriesResult[] = [],
): Record<string, unknown> | null {
  const result = condition.result;
  if (!result) return null;
  const members = seriesList.filter((series) => condition.seriesIds.includes(series.id));
  const timeUnit = members[0]?.timeUnit ?? '';
  const valueUnit = members[0]?.valueUnit ?? '';
  const samples = members.map((series) => ({
    series,
    sample: plotSample(
      series.observations.filter((observation) => observation.excluded === undefined),
      {
        valueOf: observationValue,
      },
    ),
  }));
  const observations = samples.flatMap(({ series, sample }) =>
    sample.points.map((observation) => ({
      time: observation.time,
      value: observation.value,
      group: series.id,
    })),
  );
  const shown = samples.reduce((sum, { sample }) => sum + sample.shown, 0);
  const total = samples.reduce((sum, { sample }) => sum + sample.total, 0);
  const curves = result.lines.flatMap((line) =>
    line.grid.flatMap((point) => [
      ...(point.mean === null
        ? []
        : [
            {
              time: point.time,
              value: point.mean,
              group: line.label,
              line: line.label,
              curve: `${line.label}: mean`,
              kind: 'mean',
            },
          ]),
      ...(limits.lower !== undefined && point.lowerCL !== null
        ? [
            {
              time: point.time,
              value: point.lowerCL,
              group: line.label,
              line: line.label,
              curve: `${line.label}: lower confidence limit`,
              kind: 'limit',
            },
          ]
        : []),
      ...(limits.upper !== undefined && point.upperCL !== null
        ? [
            {
              time: point.time,
              value: point.upperCL,
              group: line.label,
              line: line.label,
              curve: `${line.label}: upper confidence limit`,
              kind: 'limit',
            },
          ]
        : []),
    ]),
  );
  const criteria = [
    ...(limits.lower === undefined ? [] : [{ value: limits.lower, label: `lower limit ${limits.lower}` }]),
    ...(limits.upper === undefined ? [] : [{ value: limits.upper, label: `upper limit ${limits.upper}` }]),
  ];
  const percent = Math.round(result.method.confidence * 100);
  const groups = [
    ...new Set([...result.lines.map((line) => line.label), ...members.map((series) => series.id)]),
  ];
  // Issue 17 §4: each batch or line has its own colour, point shape and dash, so it reads in grey.
  const colourScale = { domain: groups, range: groups.map((_, index) => cycled(SERIES_COLOURS, index)) };
  const shapeScale = { domain: groups, range: groups.map((_, index) => cycled(SERIES_SHAPES, index)) };
  const dashScale = { domain: groups, range: groups.map((_, index) => cycled(SERIES_DASHES, index)) };
  const layers: Record<string, unknown>[] = [
    {
      data: { values: curves },
      mark: { type: 'line', clip: true },
      encoding: {
        x: { field: 'time', type: 'quantitative', title: timeTitle(timeUnit) },
        y: { field: 'value', type: 'quantitative', title: `Value (${valueUnit})`, scale: { zero: false } },
        detail: { field: 'curve', type: 'nominal' },
        color: { field: 'group', type: 'nominal', title: 'Batch / line', scale: colourScale },
        // Its own field, so the dashes get a legend of their own (merged with the shapes they would not show).
        strokeDash: {
          field: 'line',
          type: 'nominal',
          title: 'Line',
          scale: dashScale,
          legend: LINE_LEGEND,
        },
        // The dash tells the batch; the width tells the mean line (thick) from its confidence limit (thin).
        strokeWidth: { condition: { test: "datum.kind === 'mean'", value: 2.5 }, value: 1 },
        tooltip: [
          { field: 'curve', type: 'nominal' },
          { field: 'time', type: 'quantitative', format: TOOLTIP_FORMAT },
          { field: 'value', type: 'quantitative', format: TOOLTIP_FORMAT },
        ],
      },
    },
    {
      data: { values: observations },
      mark: { type: 'point', filled: true, size: 50 },
      encoding: {
        x: { field: 'time', type: 'quantitative' },
        y: { field: 'value', type: 'quantitative' },
        color: { field: 'group', type: 'nominal', title: 'Batch / line', scale: colourScale },
        shape: { field: 'group', type: 'nominal', title: 'Batch / line', scale: shapeScale },
        tooltip: [
          { field: 'group', type: 'nominal', title: 'series' },
          { field: 'time', type: 'quantitative', format: TOOLTIP_FORMAT },
          { field: 'value', type: 'quantitative', format: TOOLTIP_FORMAT },
        ],
      },
    },
    {
      data: { values: criteria },
      mark: { type: 'rule', color: PALETTE.alert, strokeWidth: 1.5 },
      encoding: { y: { field: 'value', type: 'quantitative' } },
    },
    {
      data: { values: criteria },
      mark: {
        type: 'text',
        align: 'left',
        baseline: 'bottom',
        dy: -3,
        x: 4,
        color: PALETTE.alert,
        fontSize: 11,
      },
      encoding: { y: { field: 'value', type: 'quantitative' }, text: { field: 'label' } },
    },
  ];
  if (result.shelfLife !== null) {
    // The statistical estimate, as the table's row; past the last result it says so, as the table does.
    const beyond = result.extrapolation.beyondObservedData === true ? ' (beyond the data)' : '';
    const crossing = [
      {
        time: result.shelfLife,
        label: `shelf life estimate ${formatSignificant(result.shelfLife, 3)} ${timeUnit}${beyond}`,
      },
    ];
    layers.push(
      {
        data: { values: crossing },
        mark: { type: 'rule', color: PALETTE.ink, strokeDash: [2, 2] },
        encoding: { x: { field: 'time', type: 'quantitative' } },
      },
      {
        data: { values: crossing },
        mark: { type: 'text', align: 'left', baseline: 'top', dx: 4, y: 4, fontSize: 11, color: PALETTE.ink },
        encoding: { x: { field: 'time', type: 'quantitative' }, text: { field: 'label' } },
      },
    );
  }
  const where = condition.temperatureC === null ? '' : ` at ${condition.temperatureC} °C`;
  return {
    $schema: VEGA_LITE_SCHEMA,
    description: `ICH Q1E shelf-life plot${where}: batch results, mean line, ${percent} % confidence limit and acceptance criterion.`,
    config: FIGURE_CONFIG,
    width: 620,
    height: 300,
    title: {
      text: `Q1E shelf life${where}`,
      subtitle: [
        `${scaleNote(condition, results)}; ${result.model === 'single-batch' ? 'single batch' : `model: ${result.model}`}.`,
        `Thick: mean line; thin: ${result.method.sidedness} ${percent} % confidence limit; red line: acceptance criterion${sampleNote({ shown, total })}.`,
      ],
    },
    layer: layers,
  };
}
