import { type DerivedFigure, derivedFigure, type ModelSummary } from './derived/model-summary.ts';
import { predictedValue } from './derived/predicted-value.ts';
import {
  type LawEstimate,
  type ModelAveragedFigure,
  modelAverage,
  plausibleModelIndices,
} from './model-averaging.ts';
import type { RateLawFit } from './order/fit-rate-law.ts';
import type { PlausibleLaw, PlausibleLawFigures, SeriesOptions } from './series-analysis.ts';

/**
 * The figures of a series whose order the data do not name: for each plausible law (Akaike weight
 * ≥ 0.1 or ΔAICc ≤ 2) its k, half-life, t90 and time to each limit with their intervals; the range
 * of each figure over those laws; and the model averages of t90, the time to each limit and the
 * predicted values with their unconditional intervals (`model-averaging.ts`; Burnham & Anderson
 * 2002 §4.3, eq. 4.9). k is shown per law and never averaged: its unit differs between orders.
 *
 * Why: abstaining on the order is honest, leaving the analyst with nothing is not; what every
 * plausible law agrees on, and how far they disagree, is what the data can support.
 *
 * With too few points for AICc (fewer than the order comparison needs), no law can be weighed:
 * every fitted integer law is shown alike with its figures and their range, and no average is
 * formed (the reason says so) — an unweighted average would claim equal support nobody measured.
 *
 * Throws nothing (a law whose figure is not estimable carries its reason; an average that cannot be
 * formed says why).
 *
 * Example: 10 % loss over 24 months with first- and second-order laws both plausible gives two laws,
 * t90 range [t90 of second order, t90 of first order] and one model-averaged t90 between them.
 */
export function plausibleLawFigures(
  models: readonly ModelSummary[],
  fits: readonly (RateLawFit | null)[],
  options: SeriesOptions,
  timeUnit: string,
  lastTime: number,
  confidenceLevel: number,
): PlausibleLawFigures {
  const aicc = models.map((model) => (model.applicable ? model.aicc : null));
  const weights = models.map((model) => model.weight);
  // Too few points for AICc to rank any law: every fitted integer law stands alike, unweighted.
  const unranked = aicc.every((value) => value === null);
  const indices = (
    unranked ? [0, 1, 2].filter((index) => models[index]?.applicable) : plausibleModelIndices(aicc, weights)
  ).filter((index) => fits[index] !== null && fits[index] !== undefined);
  let lowest = Number.POSITIVE_INFINITY;
  for (const value of aicc) if (value !== null && value < lowest) lowest = value;
  const limit = (fit: RateLawFit, value: number | undefined) =>
    value === undefined ? undefined : derivedFigure(fit, { value }, confidenceLevel, timeUnit, lastTime);
  const laws: PlausibleLaw[] = indices.map((index) => {
    const model = models[index]!;
    const fit = fits[index]!;
    const law: PlausibleLaw = {
      model: model.order,
      weight: model.weight,
      deltaAicc: model.aicc === null ? null : model.aicc - lowest,
      k: model.k,
      kCi95: model.kCi95,
      kUnit: model.kUnit,
      halfLife: model.halfLife,
      t90: model.t90,
    };
    if (options.lowerLimit !== undefined || options.upperLimit !== undefined) {
      law.timeToLimit = {};
      const lower = limit(fit, options.lowerLimit);
      const upper = limit(fit, options.upperLimit);
      if (lower !== undefined) law.timeToLimit.lower = lower;
      if (upper !== undefined) law.timeToLimit.upper = upper;
    }
    return law;
  });
  const estimateOf = (figure: DerivedFigure | null | undefined, index: number): LawEstimate => ({
    model: String(models[indices[index]!]!.order),
    weight: models[indices[index]!]!.weight ?? 0,
    estimate: figure?.estimate ?? null,
    interval: figure?.ci95 ?? null,
    degreesOfFreedom: models[indices[index]!]!.degreesOfFreedom,
  });
  const unweighed = (): ModelAveragedFigure => ({
    ...modelAverage([], confidenceLevel, 'log'),
    laws: laws.map((law) => ({ model: String(law.model), weight: 0 })),
    reason:
      'not averaged: too few points for AICc to weigh the laws; each law’s figure and their range are shown',
  });
  const averageTime = (pick: (law: PlausibleLaw) => DerivedFigure | null | undefined) =>
    unranked
      ? withRange(unweighed(), laws.map(pick))
      : modelAverage(
          laws.map((law, index) => estimateOf(pick(law), index)),
          confidenceLevel,
          'log',
        );
  const result: PlausibleLawFigures = {
    laws,
    range: {
      halfLife: rangeOf(laws.map((law) => law.halfLife)),
      t90: rangeOf(laws.map((law) => law.t90)),
    },
    modelAveraged: { t90: averageTime((law) => law.t90) },
  };
  if (options.lowerLimit !== undefined || options.upperLimit !== undefined) {
    result.range.timeToLimit = {};
    result.modelAveraged.timeToLimit = {};
    if (options.lowerLimit !== undefined) {
      result.range.timeToLimit.lower = rangeOf(laws.map((law) => law.timeToLimit?.lower));
      result.modelAveraged.timeToLimit.lower = averageTime((law) => law.timeToLimit?.lower);
    }
    if (options.upperLimit !== undefined) {
      result.range.timeToLimit.upper = rangeOf(laws.map((law) => law.timeToLimit?.upper));
      result.modelAveraged.timeToLimit.upper = averageTime((law) => law.timeToLimit?.upper);
    }
  }
  if (options.predictAt !== undefined) {
    result.modelAveraged.predictions = options.predictAt.map((time) => {
      const estimates = indices.map((modelIndex, index) => {
        const predicted = predictedValue(fits[modelIndex]!, time, confidenceLevel);
        return {
          ...estimateOf(null, index),
          estimate: predicted.estimate,
          interval: predicted.confidenceInterval,
        };
      });
      return { time, ...(unranked ? unweighed() : modelAverage(estimates, confidenceLevel, 'linear')) };
    });
  }
  return result;
}

/** Smallest and largest estimate over the laws; null unless every law has one. */
function rangeOf(figures: readonly (DerivedFigure | null | undefined)[]): [number, number] | null {
  const estimates = figures.map((figure) => figure?.estimate ?? null);
  if (estimates.length === 0 || estimates.some((value) => value === null)) return null;
  const values = estimates as number[];
  return [Math.min(...values), Math.max(...values)];
}

/** An average that was not formed, still carrying the range of the laws' estimates. */
function withRange(
  figure: ModelAveragedFigure,
  figures: readonly (DerivedFigure | null | undefined)[],
): ModelAveragedFigure {
  return { ...figure, range: rangeOf(figures) };
}
