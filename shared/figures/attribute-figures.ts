import type { Series } from '../kinetics/types.ts';
import { analysisFigures, type FigureSpec } from './analysis-figures.ts';
import { type FigureDataTable, figureDataTables } from './figure-data-tables.ts';
import type { StoredAnalysisResult } from './stored-result.ts';

/**
 * The figures of the attributes after the first in a multi-attribute run (issue 15 §1): each
 * attribute's stored analysis and bands drawn by the same `analysisFigures` and tabulated by the
 * same `figureDataTables` as the first attribute's, with its own acceptance criterion. Only the
 * names change, so that two attributes' figures never share an id, a group or a title: the id and
 * group gain the prefix "attribute-N-" (N = the attribute's place in the study, the first being 0),
 * and the dataset figures (Arrhenius, Q1E) are titled with the attribute's name.
 *
 * Pure and deterministic; throws nothing. A run of one attribute has no such figures.
 *
 * Example: Impurity B, the study's second attribute, gives "attribute-1-series-0-curves" (group
 * "attribute-1-series-0") and "attribute-1-q1e-25" titled "Impurity B: Q1E shelf life at 25 °C".
 */

export function attributePrefix(place: number): string {
  return `attribute-${place}-`;
}

export interface AttributeFigures {
  figures: FigureSpec[];
  /** Each figure's data table, by its (prefixed) id. */
  tables: Record<string, FigureDataTable>;
}

export function otherAttributeFigures(
  stored: StoredAnalysisResult,
  seriesList: readonly Series[],
  storageTemperatureC: number | null,
): AttributeFigures[] {
  return (stored.otherAttributes ?? []).map((entry, index) => {
    const prefix = attributePrefix(index + 1);
    const own = { analysis: entry.analysis, confidenceBands: entry.confidenceBands };
    const limits = {
      ...(entry.attribute.lowerLimit === null ? {} : { lower: entry.attribute.lowerLimit }),
      ...(entry.attribute.upperLimit === null ? {} : { upper: entry.attribute.upperLimit }),
    };
    const plain = analysisFigures(own, seriesList, limits, storageTemperatureC);
    const plainTables = figureDataTables(own, seriesList, plain);
    const figures = plain.map((figure) => ({
      ...figure,
      id: `${prefix}${figure.id}`,
      group: `${prefix}${figure.group}`,
      title: figure.seriesId === null ? `${entry.attribute.name}: ${figure.title}` : figure.title,
    }));
    const tables = Object.fromEntries(
      Object.entries(plainTables).map(([id, table]) => [`${prefix}${id}`, table]),
    );
    return { figures, tables };
  });
}
