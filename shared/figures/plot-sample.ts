/**
 * The points a figure draws when a series is too long to draw every one: a deterministic
 * decimation that keeps each interval's extremes. The points (in the given order, which for a
 * series is time order) are cut into equal runs of consecutive points; from each run the figure
 * keeps its lowest and highest value (the first of equals), and it always keeps the first and last
 * point and every point that must stay visible (excluded points, results below a limit, possible
 * outliers). The figure says how many it shows; its data table lists the same points, and the
 * export's Data sheet every point.
 *
 * Why extremes: an even "every k-th point" sample can drop the one result outside the acceptance
 * criterion or the largest residual, so a figure would look cleaner than the data. Keeping each
 * run's minimum and maximum (the idea of min/max "envelope" decimation for line and scatter
 * displays: U. Jugel et al., "M4: a visualization-oriented time series data aggregation", PVLDB
 * 7(10), 2014) draws the same vertical extent in every pixel column as all the points would, and
 * the overall extremes always. Why decimate at all: a browser draws a few thousand SVG marks
 * smoothly, not 100 000, and in a PDF report 100 000 dots are a solid smear.
 *
 * Throws nothing. Example: 10 000 points with `MAX_PLOTTED_POINTS` 1000 cut into 500 runs of 20,
 * keep each run's lowest and highest (up to 1000 points), the first and last, plus every point
 * `mustKeep` names, and report `{ shown, total: 10 000 }`.
 */

/** Most points per series a figure draws (besides those it must keep). */
export const MAX_PLOTTED_POINTS = 1000;

export interface PlotSample<T> {
  points: T[];
  shown: number;
  total: number;
}

export interface PlotSampleOptions<T> {
  /** Points drawn whatever the sample (excluded, censored, flagged). */
  mustKeep?: (point: T, index: number) => boolean;
  /** The plotted value whose extremes each run keeps; null/non-finite values are not candidates. */
  valueOf: (point: T) => number | null;
  maximum?: number;
}

export function plotSample<T>(points: readonly T[], options: PlotSampleOptions<T>): PlotSample<T> {
  const maximum = Math.max(2, options.maximum ?? MAX_PLOTTED_POINTS);
  if (points.length <= maximum) return { points: [...points], shown: points.length, total: points.length };
  const keep = new Uint8Array(points.length);
  keep[0] = 1;
  keep[points.length - 1] = 1;
  const runs = Math.floor(maximum / 2);
  const runLength = Math.ceil(points.length / runs);
  for (let start = 0; start < points.length; start += runLength) {
    const end = Math.min(points.length, start + runLength);
    let low = -1;
    let high = -1;
    let lowValue = Number.POSITIVE_INFINITY;
    let highValue = Number.NEGATIVE_INFINITY;
    for (let index = start; index < end; index++) {
      const value = options.valueOf(points[index]!);
      if (value === null || !Number.isFinite(value)) continue;
      if (value < lowValue) {
        lowValue = value;
        low = index;
      }
      if (value > highValue) {
        highValue = value;
        high = index;
      }
    }
    if (low >= 0) keep[low] = 1;
    if (high >= 0) keep[high] = 1;
  }
  const kept: T[] = [];
  for (let index = 0; index < points.length; index++) {
    if (keep[index] === 1 || options.mustKeep?.(points[index]!, index)) kept.push(points[index]!);
  }
  return { points: kept, shown: kept.length, total: points.length };
}

/** An observation's plotted value; a result below a limit (censored) is no candidate extreme. */
export function observationValue(observation: { value: number; censored?: unknown }): number | null {
  return observation.censored === undefined ? observation.value : null;
}

/** " · showing 1,001 of 100,000 points" when a sample was taken, otherwise "". */
export function sampleNote(sample: { shown: number; total: number }): string {
  if (sample.shown === sample.total) return '';
  return ` · showing ${sample.shown.toLocaleString('en-GB')} of ${sample.total.toLocaleString('en-GB')} points (each interval’s lowest and highest, and every flagged point)`;
}
