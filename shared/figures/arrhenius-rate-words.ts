import type { DatasetArrhenius } from '../kinetics/dataset-analysis.ts';

/**
 * The words for the rate an Arrhenius result is fitted to, so that a table, figure or report says
 * no more and no other than the engine did. Since engine 0.4.0 an attribute that increases (a
 * degradation product, water) is fitted on its zero-order formation rate k_f = dC/dt = −k₀, in
 * the value unit per time unit (`rateSense` 'formation', `orderSource` 'formation'); every other
 * result is of the loss rate constant k, as before. Runs stored before 0.4.0 carry no
 * `rateSense` and are all of k (docs/engine-changes.md, "Arrhenius on the formation rate").
 *
 * Throws nothing.
 *
 * Example: `rateWords({ rateSense: 'formation' })` gives `{ symbol: 'k_f', name: 'formation rate
 * k_f', label: 'Formation rate k_f', ln: 'ln k_f' }`; a result without `rateSense` gives k's words.
 */

/** Why a formation fit is of zero order, in the words every screen and export uses. */
export const FORMATION_ORDER_WHY = 'zero order by rule: the formation rate of an attribute that increases';

/** True when the line is of the formation rate of an increasing attribute (absent: a loss, before 0.4.0). */
export function isFormationRate(arrhenius: Pick<DatasetArrhenius, 'rateSense'> | null | undefined): boolean {
  return (arrhenius as { rateSense?: string } | null | undefined)?.rateSense === 'formation';
}

export interface RateWords {
  /** 'k' or 'k_f'. */
  symbol: string;
  /** How a label names the rate: 'k' or 'formation rate k_f'. */
  name: string;
  /** The same at the start of a label: 'k' or 'Formation rate k_f'. */
  label: string;
  /** Its logarithm: 'ln k' or 'ln k_f'. */
  ln: string;
}

export function rateWords(arrhenius: Pick<DatasetArrhenius, 'rateSense'> | null | undefined): RateWords {
  return isFormationRate(arrhenius)
    ? { symbol: 'k_f', name: 'formation rate k_f', label: 'Formation rate k_f', ln: 'ln k_f' }
    : { symbol: 'k', name: 'k', label: 'k', ln: 'ln k' };
}

/**
 * The rate a series contributed to the line, from its rate-law k of the Arrhenius order: k itself
 * for a loss, −k₀ for a formation; null when it has no logarithm (the engine left it out).
 */
export function seriesRate(
  arrhenius: Pick<DatasetArrhenius, 'rateSense'>,
  k: number | null | undefined,
): number | null {
  if (k === null || k === undefined) return null;
  const rate = isFormationRate(arrhenius) ? -k : k;
  return rate > 0 ? rate : null;
}
