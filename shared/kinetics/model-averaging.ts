import { studentTQuantile } from './numeric/student-t-quantile.ts';

/**
 * Akaike-weighted model averaging of a quantity that means the same under every rate law (t90, the
 * time to a limit, a predicted value), with the unconditional interval that adds the spread
 * between the laws to each law's own uncertainty.
 *
 * Why: when the data cannot tell the order, reporting nothing leaves the analyst with a dead end,
 * and reporting one law's figure claims a choice nobody made. Burnham & Anderson average over the
 * laws the data support, weighting each by its Akaike weight, and widen the interval by how much
 * the laws disagree. Only quantities with one meaning and one unit across the laws are averaged —
 * never k, whose unit differs between orders (valueUnit^(1−n)/timeUnit).
 *
 * Formula (K. P. Burnham & D. R. Anderson, Model Selection and Multimodel Inference, 2nd ed.,
 * Springer 2002, §4.3; eq. 4.1 for the estimate and eq. 4.9 for the unconditional standard error —
 * equation numbers from memory):
 *   θ̄ = Σ wᵢ θ̂ᵢ,   se(θ̄) = Σ wᵢ √( var(θ̂ᵢ | gᵢ) + (θ̂ᵢ − θ̄)² ),
 * with the weights wᵢ of the laws averaged, renormalised to sum to 1 over them. The interval is
 * θ̄ ± q·se(θ̄), q the Student-t quantile on the smallest residual degrees of freedom among the
 * laws (the most cautious choice; B&A use the normal quantile for large samples). Each law's
 * var(θ̂ᵢ | gᵢ) is read back from its own interval: se = (upper − lower)/(2·qᵢ), qᵢ on its own df.
 * Times are positive and their intervals asymmetric (Fieller, delta on ln t), so for `scale: 'log'`
 * the whole computation runs on ln θ and the estimate and interval are exponentiated (a weighted
 * geometric mean); predicted values use `scale: 'linear'`.
 *
 * Which laws: the plausible ones — Akaike weight ≥ 0.1 or ΔAICc ≤ 2 (`plausibleModelIndices`).
 * If a plausible law has no estimate or no interval for the quantity, no average is formed (the
 * missing law might carry the weight); the reason says which.
 *
 * Throws nothing; returns null estimates with a reason instead.
 *
 * Example: t90 of 20 (interval 18–22, df 5) with weight 0.6 and 30 (27–33, df 5) with weight 0.4,
 * scale 'linear', give θ̄ = 24 and se = 0.6·√(0.778² + 16) + 0.4·√(1.167² + 36) ≈ 4.89
 * (t₀.₉₇₅,₅ = 2.5706), interval 11.43–36.57.
 */

/** Plausible: Akaike weight at least this (the threshold issue 12 states; common practice). */
export const PLAUSIBLE_WEIGHT = 0.1;
/** Plausible: AICc within this of the lowest ("substantial support", Burnham & Anderson 2002 §2.6, from memory). */
export const PLAUSIBLE_DELTA_AICC = 2;

/** One law's estimate of the quantity, its interval at the analysis level, and its weight. */
export interface LawEstimate {
  model: string;
  weight: number;
  estimate: number | null;
  interval: [number, number] | null;
  degreesOfFreedom: number | null;
}

export interface ModelAveragedFigure {
  estimate: number | null;
  /** Unconditional interval (Burnham & Anderson 2002 §4.3, eq. 4.9) at the analysis level. */
  interval: [number, number] | null;
  /** Unconditional standard error, on the scale of the computation (ln θ for `scale: 'log'`). */
  unconditionalStandardError: number | null;
  scale: 'log' | 'linear';
  /** The laws averaged and the weights they carried, renormalised to sum to 1. */
  laws: { model: string; weight: number }[];
  /** Smallest and largest estimate of the laws averaged (their range). */
  range: [number, number] | null;
  method: 'akaike-weighted model average (Burnham & Anderson 2002 §4.3, eq. 4.9)';
  reason?: string;
}

const METHOD = 'akaike-weighted model average (Burnham & Anderson 2002 §4.3, eq. 4.9)' as const;

/**
 * Indices of the plausible laws: weight ≥ `PLAUSIBLE_WEIGHT` or AICc within `PLAUSIBLE_DELTA_AICC`
 * of the lowest. Laws without an AICc are never plausible.
 */
export function plausibleModelIndices(
  aicc: readonly (number | null)[],
  weights: readonly (number | null)[],
): number[] {
  let lowest = Number.POSITIVE_INFINITY;
  for (const value of aicc) if (value !== null && value < lowest) lowest = value;
  const indices: number[] = [];
  aicc.forEach((value, index) => {
    if (value === null) return;
    const weight = weights[index] ?? null;
    if ((weight !== null && weight >= PLAUSIBLE_WEIGHT) || value - lowest <= PLAUSIBLE_DELTA_AICC) {
      indices.push(index);
    }
  });
  return indices;
}

/** The model average of `laws` (already restricted to the plausible ones) at `confidenceLevel`. */
export function modelAverage(
  laws: readonly LawEstimate[],
  confidenceLevel: number,
  scale: 'log' | 'linear',
): ModelAveragedFigure {
  const empty = (reason: string): ModelAveragedFigure => ({
    estimate: null,
    interval: null,
    unconditionalStandardError: null,
    scale,
    laws: laws.map((law) => ({ model: law.model, weight: law.weight })),
    range: null,
    method: METHOD,
    reason,
  });
  if (laws.length === 0) return empty('no plausible law');
  const missing = laws.filter(
    (law) =>
      law.estimate === null ||
      law.interval === null ||
      law.degreesOfFreedom === null ||
      law.degreesOfFreedom < 1 ||
      (scale === 'log' && !(law.estimate > 0 && law.interval[0] > 0)),
  );
  if (missing.length > 0) {
    return empty(
      `not averaged: ${missing.map((law) => lawName(law.model)).join(', ')} ${missing.length === 1 ? 'has' : 'have'} no ${scale === 'log' ? 'positive ' : ''}estimate with an interval`,
    );
  }
  const totalWeight = laws.reduce((sum, law) => sum + law.weight, 0);
  if (!(totalWeight > 0)) return empty('the plausible laws carry no weight');
  const transform = scale === 'log' ? Math.log : (value: number) => value;
  const back = scale === 'log' ? Math.exp : (value: number) => value;
  const items = laws.map((law) => {
    const [lower, upper] = law.interval as [number, number];
    const quantile = studentTQuantile(1 - (1 - confidenceLevel) / 2, law.degreesOfFreedom as number);
    return {
      weight: law.weight / totalWeight,
      value: transform(law.estimate as number),
      standardError: (transform(upper) - transform(lower)) / (2 * quantile),
    };
  });
  const mean = items.reduce((sum, item) => sum + item.weight * item.value, 0);
  const unconditional = items.reduce(
    (sum, item) => sum + item.weight * Math.sqrt(item.standardError ** 2 + (item.value - mean) ** 2),
    0,
  );
  const smallestDf = Math.min(...laws.map((law) => law.degreesOfFreedom as number));
  const quantile = studentTQuantile(1 - (1 - confidenceLevel) / 2, smallestDf);
  const estimates = laws.map((law) => law.estimate as number);
  return {
    estimate: back(mean),
    interval: [back(mean - quantile * unconditional), back(mean + quantile * unconditional)],
    unconditionalStandardError: unconditional,
    scale,
    laws: laws.map((law, index) => ({ model: law.model, weight: items[index]!.weight })),
    range: [Math.min(...estimates), Math.max(...estimates)],
    method: METHOD,
  };
}

function lawName(model: string): string {
  return model === 'n' ? 'the free-order law' : `the ${['zero', 'first', 'second'][Number(model)]}-order law`;
}
