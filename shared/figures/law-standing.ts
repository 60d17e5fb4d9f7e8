import type { ModelSummary } from '../kinetics/derived/model-summary.ts';
import { plausibleModelIndices } from '../kinetics/model-averaging.ts';
import type { SeriesAnalysis } from '../kinetics/series-analysis.ts';
import { DIGITS, MODEL_NAMES } from './results-table.ts';
import { formatSignificant } from './significant-figures.ts';

/**
 * What a figure may say about each rate law of a series: exactly what the results table says.
 *
 * Why: a figure that calls a law "chosen" while the table says "none named" claims a decision the
 * analysis did not make — the commonest way a plot misleads (issue 12 §4). So a law is labelled
 * as named only when the table names it: the order the data named (`orderSource` 'data', shown
 * "chosen") or the analyst's fixed order ('analyst', shown "fixed by the analyst", the table's
 * words). When no order is named, the figure shows the laws the data still support with their own
 * names and Akaike weights, and never "chosen".
 *
 * Formula in words: a law is plausible when its Akaike weight is at least `PLAUSIBLE_WEIGHT` or
 * its AICc is within `PLAUSIBLE_DELTA_AICC` of the lowest AICc of the fitted laws (ΔAICc ≤ 2:
 * "substantial support", Burnham & Anderson 2002 §2.6, from memory; the weight 0.1 is the
 * threshold issue 12 states — common practice). Weights and AICc are the stored ones the table
 * prints (`ModelSummary.weight`, `.aicc`, over all four laws).
 *
 * Throws nothing.
 *
 * Example: weights [0.184, 0.355, 0.460, 0.000] with no order named make zero, first and second
 * order plausible, labelled "zero order (plausible, weight 0.184)", …, and the free order
 * "free order n (weight 0.000)"; with first order named by the data the labels are
 * "first order (chosen)" and the plain names of the others.
 */

// One definition of "plausible" for the engine's model averages and the figures' legends.
export { PLAUSIBLE_DELTA_AICC, PLAUSIBLE_WEIGHT } from '../kinetics/model-averaging.ts';

/** How the table words each source of a named order; anything else is never "chosen". */
const NAMED_BECAUSE: Record<string, string> = {
  data: 'chosen',
  analyst: 'fixed by the analyst',
  // Issue 12 §3: a working order declared by the study is labelled so, never "chosen".
  study: 'working order from the study',
};

export interface NamedLaw {
  /** '0', '1' or '2'. */
  model: string;
  /** The table's words for why it is named: "chosen", "fixed by the analyst". */
  because: string;
}

/** The order the results table names for this series, or null ("none named"). */
export function namedLaw(analysis: SeriesAnalysis): NamedLaw | null {
  const order = analysis.reportedOrder;
  if (order === null || order === undefined) return null;
  return { model: String(order), because: NAMED_BECAUSE[String(analysis.orderSource)] ?? 'named' };
}

/** The fitted laws ranked by the table's weights and AICc: which are plausible (`plausibleModelIndices`). */
export function plausibleLaws(models: readonly ModelSummary[]): Set<string> {
  const indices = plausibleModelIndices(
    models.map((model) => (model.applicable ? model.aicc : null)),
    models.map((model) => model.weight),
  );
  return new Set(indices.map((index) => String(models[index]!.order)));
}

export type LawEmphasis = 'named' | 'plausible' | 'other';

export interface LawLabel {
  model: string;
  label: string;
  emphasis: LawEmphasis;
}

/**
 * Legend label and emphasis of each fitted law. With an order named: that law "(chosen)" (or the
 * table's other words), the rest by name. Without: plausible laws "(plausible, weight w)", the
 * rest "(weight w)" or "(no AICc)", w written as the table writes it (3 significant figures). When no law has
 * an AICc (too few points to rank them) every fitted law is shown alike, by name.
 */
export function lawLabels(analysis: SeriesAnalysis): LawLabel[] {
  const named = namedLaw(analysis);
  const fitted = analysis.models.filter((model) => model.applicable && model.k !== null && model.c0 !== null);
  const plausible = plausibleLaws(analysis.models);
  return fitted.map((model) => {
    const name = String(model.order);
    const words = MODEL_NAMES[name] ?? name;
    if (named) {
      return name === named.model
        ? { model: name, label: `${words} (${named.because})`, emphasis: 'named' }
        : { model: name, label: words, emphasis: 'other' };
    }
    if (plausible.size === 0) return { model: name, label: words, emphasis: 'plausible' };
    if (model.weight === null) return { model: name, label: `${words} (no AICc)`, emphasis: 'other' };
    const weight = formatSignificant(model.weight, DIGITS.weight);
    return plausible.has(name)
      ? { model: name, label: `${words} (plausible, weight ${weight})`, emphasis: 'plausible' }
      : { model: name, label: `${words} (weight ${weight})`, emphasis: 'other' };
  });
}
