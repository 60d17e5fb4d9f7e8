/**
 * The points a figure draws when a series is too long to draw every one: an even, deterministic
 * subsample (every k-th point in the given order), always keeping the points that must stay
 * visible (excluded points, possible outliers). The figure says how many it shows; every point
 * is still in the tables and in the export's Data sheet.
 *
 * Why: a browser draws a few thousand SVG marks smoothly, not 100 000; and the same spec is
 * rendered into PDF reports, where a plot of 100 000 dots is a solid smear anyway.
 *
 * Throws nothing. Example: 10 000 points with `MAX_PLOTTED_POINTS` 1000 keep points 0, 10, 20, …
 * plus every point `mustKeep` names, and report `{ shown: 1000 + kept, total: 10 000 }`.
 */

/** Most points per series a figure draws. */
export const MAX_PLOTTED_POINTS = 1000;

export interface PlotSample<T> {
  points: T[];
  shown: number;
  total: number;
}

export function plotSample<T>(
  points: readonly T[],
  mustKeep: (point: T, index: number) => boolean = () => false,
  maximum = MAX_PLOTTED_POINTS,
): PlotSample<T> {
  if (points.length <= maximum) return { points: [...points], shown: points.length, total: points.length };
  const stride = Math.ceil(points.length / maximum);
  const kept = points.filter(
    (point, index) => index % stride === 0 || index === points.length - 1 || mustKeep(point, index),
  );
  return { points: kept, shown: kept.length, total: points.length };
}

/** " · showing 1,001 of 100,000 points" when a sample was taken, otherwise "". */
export function sampleNote(sample: { shown: number; total: number }): string {
  if (sample.shown === sample.total) return '';
  return ` · showing ${sample.shown.toLocaleString('en-GB')} of ${sample.total.toLocaleString('en-GB')} points (an even sample)`;
}
