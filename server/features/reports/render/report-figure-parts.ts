/**
 * Which figures the default report prints and the part of the report each belongs to: the
 * ICH Q1E shelf-life plots with the results, the Arrhenius plot with the temperature dependence,
 * each series' data and fitted curves in the per-series appendix. One rule for both the order
 * the figures are numbered in (`reportFigures`) and the groups the template prints
 * (`figureGroups` of the report context).
 *
 * A run of several attributes draws the figures of each attribute: the first attribute's keep
 * the ids of a one-attribute run ('q1e-25'), the others' carry the attribute's place in the
 * study ('attribute-2-q1e-25' for the second), so ids stay unique per report.
 *
 * Example: `reportFigurePart('q1e-25')` is 'shelfLife'; `reportFigurePart('series-3-residuals')` is
 * null; `reportFigurePart('attribute-2-arrhenius')` is 'temperature' and
 * `reportFigureAttribute('attribute-2-arrhenius')` is 1 (the second attribute, counted from 0).
 */
export type ReportFigurePart = 'shelfLife' | 'temperature' | 'series';

/** The report parts in reading order. */
export const REPORT_FIGURE_PARTS: readonly ReportFigurePart[] = ['shelfLife', 'temperature', 'series'];

const ATTRIBUTE_PREFIX = /^attribute-(\d+)-/;

/** The figure id of an attribute's figure: unchanged for the first (index 0), prefixed for the others. */
export function attributeFigureId(attributeIndex: number, id: string): string {
  return attributeIndex === 0 ? id : `attribute-${attributeIndex + 1}-${id}`;
}

/** The attribute (index in the study's order, from 0) a report figure belongs to. */
export function reportFigureAttribute(id: string): number {
  const match = ATTRIBUTE_PREFIX.exec(id);
  return match ? Number(match[1]) - 1 : 0;
}

/** The part of the report a figure belongs to, or null when the report does not print it. */
export function reportFigurePart(id: string): ReportFigurePart | null {
  const own = id.replace(ATTRIBUTE_PREFIX, '');
  if (own.startsWith('q1e-')) return 'shelfLife';
  if (own === 'arrhenius') return 'temperature';
  if (/^series-\d+-curves$/.test(own)) return 'series';
  return null;
}
