import type { ConditionShelfLife } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { arrheniusPlotSpec } from './arrhenius-plot.ts';
import { fittedCurvesSpec } from './fitted-curves.ts';
import { linearisedPlotsSpec } from './linearised-plots.ts';
import { q1ePlotSpec } from './q1e-plot.ts';
import { residualPlotSpec } from './residual-plot.ts';
import type { StoredAnalysisResult } from './stored-result.ts';

/** One figure: a stable id (for the page's placeholder), a title, a text alternative and the spec. */
export interface FigureSpec {
  id: string;
  title: string;
  description: string;
  /** The series it belongs to, or null for the dataset figures (Arrhenius, Q1E). */
  seriesId: string | null;
  /** 'series-N' (N = index in the analysis) or 'dataset': the screen loads one group at a time. */
  group: string;
  spec: Record<string, unknown>;
}

/** The id of a condition's Q1E figure: "q1e-25" at 25 °C, "q1e-all" without a temperature. */
export function q1eFigureId(condition: Pick<ConditionShelfLife, 'temperatureC'>): string {
  return `q1e-${condition.temperatureC === null ? 'all' : String(condition.temperatureC).replace(/[^0-9]/g, '-')}`;
}

/**
 * Every figure of an analysis, in the order the screen shows them: for each analysed series the
 * straight-line plots, the data with fitted curves and band, and the residuals; then the
 * Arrhenius plot (several temperatures) and a Q1E plot for the storage condition when it has several
 * batches (for every condition with several batches when no storage temperature is given).
 *
 * Pure and deterministic: the same stored result and series give the same specs, byte for byte,
 * so the screen, the export's figure data and a later PDF rendering agree.
 *
 * Throws nothing.
 *
 * Example: three batches at 25 °C and one at 40 °C give 4 × 3 series figures, one Arrhenius
 * plot and one Q1E plot (25 °C).
 */
export function analysisFigures(
  stored: StoredAnalysisResult,
  seriesList: readonly Series[],
  limits: { lower?: number; upper?: number },
  storageTemperatureC: number | null = null,
): FigureSpec[] {
  const figures: FigureSpec[] = [];
  const { analysis } = stored;
  analysis.series.forEach((result, index) => {
    const series = seriesList.find((candidate) => candidate.id === result.id);
    if (!result.analysis || !series) return;
    const figureId = `series-${index}`;
    const linearised = linearisedPlotsSpec(result.analysis, series);
    figures.push({
      id: `${figureId}-linearised`,
      title: `${result.id}: straight-line plots`,
      description: String(linearised.description),
      seriesId: result.id,
      group: figureId,
      spec: linearised,
    });
    const band = stored.confidenceBands.find((candidate) => candidate.seriesId === result.id);
    const curves = fittedCurvesSpec(result.analysis, series, band);
    figures.push({
      id: `${figureId}-curves`,
      title: `${result.id}: data and fitted curves`,
      description: String(curves.description),
      seriesId: result.id,
      group: figureId,
      spec: curves,
    });
    const residuals = residualPlotSpec(result.analysis, series);
    if (residuals) {
      figures.push({
        id: `${figureId}-residuals`,
        title: `${result.id}: residuals`,
        description: String(residuals.description),
        seriesId: result.id,
        group: figureId,
        spec: residuals,
      });
    }
  });
  const arrhenius = arrheniusPlotSpec(analysis);
  if (arrhenius) {
    figures.push({
      id: 'arrhenius',
      title: 'Arrhenius plot',
      description: String(arrhenius.description),
      seriesId: null,
      group: 'dataset',
      spec: arrhenius,
    });
  }
  const conditions = analysis.shelfLife ?? [];
  // A shelf life is claimed at the storage condition; accelerated conditions are in the table only.
  const claimed = conditions.filter((condition) => condition.temperatureC === storageTemperatureC);
  for (const condition of claimed.length > 0 ? claimed : conditions) {
    if (condition.seriesIds.length < 2) continue;
    const spec = q1ePlotSpec(condition, seriesList, limits, analysis.series);
    if (!spec) continue;
    figures.push({
      id: q1eFigureId(condition),
      title: `Q1E shelf life${condition.temperatureC === null ? '' : ` at ${condition.temperatureC} °C`}`,
      description: String(spec.description),
      seriesId: null,
      group: 'dataset',
      spec,
    });
  }
  return figures;
}
