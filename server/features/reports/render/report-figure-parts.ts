/**
 * Which figures the default report prints and the part of the report each belongs to: the
 * ICH Q1E shelf-life plots with the results, the Arrhenius plot with the temperature dependence,
 * each series' data and fitted curves in the per-series appendix. One rule for both the order
 * the figures are numbered in (`reportFigures`) and the groups the template prints
 * (`figureGroups` of the report context).
 *
 * Example: `reportFigurePart('q1e-25')` is 'shelfLife'; `reportFigurePart('series-3-residuals')` is null.
 */
export type ReportFigurePart = 'shelfLife' | 'temperature' | 'series';

/** The report parts in reading order. */
export const REPORT_FIGURE_PARTS: readonly ReportFigurePart[] = ['shelfLife', 'temperature', 'series'];

/** The part of the report a figure belongs to, or null when the report does not print it. */
export function reportFigurePart(id: string): ReportFigurePart | null {
  if (id.startsWith('q1e-')) return 'shelfLife';
  if (id === 'arrhenius') return 'temperature';
  if (/^series-\d+-curves$/.test(id)) return 'series';
  return null;
}
