import { possibleOutlierMessage } from '../order/bonferroni-outlier-test.ts';
import type { RateLawFit } from '../order/fit-rate-law.ts';
import { DECISIVE_DELTA_AICC, MIN_FRACTION_REACTED } from '../order/order-decision-thresholds.ts';
import type { OrderSelection } from '../order/order-selection.ts';
import type { AnalysisWarning, SeriesAnalysis, SeriesOptions } from '../series-analysis.ts';

/**
 * The warnings an analysis carries, each with a code a program can branch on and a sentence for the analyst:
 * little has reacted, no order named, the analyst's order contradicted by the data, possible outliers,
 * residuals that run in long stretches, a fit that did not converge, figures that lie outside the observed
 * time span (extrapolation).
 *
 * Throws nothing.
 *
 * Example: a series with 12 % reacted gets `{ code: 'low-fraction-reacted', message: 'Only 12.0 % …' }`.
 */

/** Runs-test level below which the residual pattern is worth a warning (the order decision uses a stricter level). */
const MISFIT_WARNING_ALPHA = 0.05;

export function collectWarnings(
  analysis: SeriesAnalysis,
  selection: OrderSelection,
  fits: readonly (RateLawFit | null)[],
  options: SeriesOptions,
): AnalysisWarning[] {
  const warnings: AnalysisWarning[] = [];
  const fraction = selection.fractionReacted;
  if (fraction !== null && fraction >= 0 && fraction < MIN_FRACTION_REACTED) {
    warnings.push({
      code: 'low-fraction-reacted',
      message: `Only ${(fraction * 100).toFixed(1)} % of the initial value has reacted; the reaction order cannot be told from these data.`,
    });
  }
  if (selection.selectedOrder === null && options.order === undefined) {
    warnings.push({ code: 'order-not-identified', message: selection.verdict });
  }
  const best = selection.bestIntegerOrder;
  if (options.order !== undefined && best !== null && best !== options.order) {
    const delta = (selection.aicc[options.order] ?? Number.NaN) - (selection.aicc[best] ?? Number.NaN);
    if (delta >= DECISIVE_DELTA_AICC) {
      warnings.push({
        code: 'analyst-order-disfavoured',
        message: `The data favour ${['zero', 'first', 'second'][best]} order over the analyst's order by ΔAICc ${delta.toFixed(1)}.`,
      });
    }
  }
  const diagnostics = analysis.diagnostics;
  if (diagnostics !== null && diagnostics.possibleOutliers.length > 0) {
    const listed = diagnostics.possibleOutliers.slice(0, 10).map((index) => diagnostics.points[index]!.time);
    warnings.push({
      code: 'possible-outliers',
      message: possibleOutlierMessage(
        diagnostics.possibleOutliers.length,
        diagnostics.outlierThreshold,
        `${listed.join(', ')}${diagnostics.possibleOutliers.length > 10 ? ', …' : ''}`,
      ),
    });
  }
  if (diagnostics !== null && diagnostics.runsTest.p < MISFIT_WARNING_ALPHA) {
    warnings.push({
      code: 'systematic-misfit',
      message: `The residuals of the ${diagnostics.model === 'n' ? 'free' : diagnostics.model}-order fit run in long stretches (runs test p = ${diagnostics.runsTest.p.toPrecision(2)}), a sign that the law misses the shape of the curve.`,
    });
  }
  fits.forEach((fit, index) => {
    if (fit !== null && !fit.converged) {
      warnings.push({
        code: 'not-converged',
        message: `The ${index === 3 ? 'free' : index}-order fit did not converge: ${fit.reason}.`,
      });
    }
  });
  const last = analysis.timeSpan[1];
  const beyond: string[] = [];
  if (analysis.halfLife?.beyondObservedTime) beyond.push('the half-life');
  if (analysis.t90?.beyondObservedTime) beyond.push('t90');
  if (analysis.timeToLimit?.lower?.beyondObservedTime) beyond.push('the time to the lower limit');
  if (analysis.timeToLimit?.upper?.beyondObservedTime) beyond.push('the time to the upper limit');
  const outside = (analysis.predictions ?? []).filter((p) => p.time > last || p.time < analysis.timeSpan[0]);
  if (outside.length > 0) beyond.push(`predictions at ${outside.map((p) => p.time).join(', ')}`);
  if (beyond.length > 0) {
    warnings.push({
      code: 'extrapolation',
      message: `${beyond.join(', ')} lie(s) outside the observed time span (${analysis.timeSpan[0]} to ${last} ${analysis.timeUnit}); the law is extrapolated.`,
    });
  }
  return warnings;
}
