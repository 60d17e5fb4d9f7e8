import { analysisFigures, type FigureSpec } from '../../../../shared/figures/analysis-figures.ts';
import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import {
  type StudyAttribute,
  seriesOfAttribute,
} from '../../../../shared/kinetics/stability/study-attributes.ts';
import type { Series } from '../../../../shared/kinetics/types.ts';
import { reportFigures } from './render-report.ts';
import { attributeFigureId, reportFigurePart } from './report-figure-parts.ts';

/**
 * The report figures of a stored analysis run, as specs in reading order — what a run draws once
 * and keeps (`run-figures.ts`). A run of one attribute gets exactly the figures it always had
 * (same ids, titles and specs, so the same drawing). A run of several attributes gets each
 * attribute's figures from its own analysis, series and criterion: the first attribute's keep
 * their ids, the others' are prefixed with the attribute's place ('attribute-2-q1e-25'), and the
 * Q1E and Arrhenius titles name the attribute ("Impurity B: Q1E shelf life at 25 °C"); a series'
 * title names it already (its id carries the attribute when a dataset holds several).
 *
 * Throws nothing of its own; a figure spec that cannot be built throws as `analysisFigures` does.
 *
 * Example: a run of Assay and Impurity B at 25 °C and 40 °C gives 'q1e-25', 'attribute-2-q1e-25',
 * 'arrhenius', 'attribute-2-arrhenius', then each attribute's 'series-…-curves'.
 */

export interface FigureLimits {
  lower?: number;
  upper?: number;
}

const limitsOf = (attribute: Pick<StudyAttribute, 'lowerLimit' | 'upperLimit'>): FigureLimits => ({
  ...(attribute.lowerLimit === null ? {} : { lower: attribute.lowerLimit }),
  ...(attribute.upperLimit === null ? {} : { upper: attribute.upperLimit }),
});

export function reportRunFigures(
  result: DatasetAnalysis | StoredAnalysisResult,
  series: readonly Series[],
  firstAttribute: Pick<StudyAttribute, 'name' | 'lowerLimit' | 'upperLimit'>,
): FigureSpec[] {
  const stored: StoredAnalysisResult =
    'analysis' in result ? result : { analysis: result, confidenceBands: [] };
  const others = stored.otherAttributes ?? [];
  if (others.length === 0) return reportFigures(analysisFigures(stored, series, limitsOf(firstAttribute)));
  // Only the name and criterion of the first attribute are read (which series, which limits).
  const first: StudyAttribute = { ...others[0]!.attribute, ...firstAttribute };
  const attributes = [first, ...others.map((other) => other.attribute)];
  const perAttribute = [
    { analysis: stored.analysis, confidenceBands: stored.confidenceBands },
    ...others.map(({ analysis, confidenceBands }) => ({ analysis, confidenceBands })),
  ].flatMap((own, index) => {
    const attribute = attributes[index]!;
    const figures = analysisFigures(
      own,
      seriesOfAttribute(series, attributes, attribute),
      limitsOf(attribute),
    );
    return figures.map((figure) => ({
      ...figure,
      id: attributeFigureId(index, figure.id),
      title: reportFigurePart(figure.id) === 'series' ? figure.title : `${attribute.name}: ${figure.title}`,
    }));
  });
  return reportFigures(perAttribute);
}
