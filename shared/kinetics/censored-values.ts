import { KineticsError } from './numeric/kinetics-error.ts';
import type { StudyAttribute } from './stability/study-attributes.ts';
import type { Observation, Series } from './types.ts';

/**
 * The study's rule for results reported below a limit ("<LOQ", "< 0.05"), applied to the series of
 * one attribute before the engine sees them. A censored result says only that the true value lies
 * somewhere below the limit; fitting the limit (or 0) as if it were measured would bias the slope,
 * so the study states what to do and the method statement prints it (issue 15 §1):
 * - 'exclude': the point is left out of the fit with the reason
 *   "reported below the limit (<text>): excluded from the fit by the study's rule";
 * - 'stated-value': the point is fitted at the study's `censoredValue` (in the attribute's unit);
 *   the cell's text is kept, so tables and figures still show it as censored.
 *
 * A point the analyst already excluded keeps the analyst's reason (their exclusion is the recorded
 * one). Series without censored points are returned as they are (the same objects), so a run of
 * uncensored data is exactly what it was before the rule existed.
 *
 * Reference: the handling of values below the quantitation limit is a stated choice of the study
 * protocol (ICH Q1E §2.2: "the procedure used and the assumptions underlying the model should be
 * stated and justified"); ICH Q3B(R2) §4 has results below the reporting threshold reported as
 * such (section from memory).
 *
 * Throws `KineticsError('invalid-input')` when the rule is 'stated-value' with no finite
 * `censoredValue` and a censored point is present.
 *
 * Example: under 'exclude', a point `{ time: 0, value: 0.05, censored: { text: '< 0.05', limit: 0.05 } }`
 * becomes `{ …, excluded: { reason: "reported below the limit (< 0.05): excluded from the fit by the
 * study's rule" } }`; under 'stated-value' with censoredValue 0.025 its value becomes 0.025.
 */
export function applyCensoredRule(series: readonly Series[], attribute: StudyAttribute): Series[] {
  return series.map((entry) => {
    if (!entry.observations.some((observation) => observation.censored)) return entry;
    return { ...entry, observations: entry.observations.map((point) => ruled(point, attribute, entry.id)) };
  });
}

/** The reason a censored point carries when the study's rule excludes it. */
export function censoredExclusionReason(text: string): string {
  return `reported below the limit (${text}): excluded from the fit by the study's rule`;
}

function ruled(observation: Observation, attribute: StudyAttribute, seriesId: string): Observation {
  if (!observation.censored || observation.excluded) return observation;
  // Any rule but 'stated-value' excludes (a study version recorded before the rule existed has none).
  if (attribute.censoredRule !== 'stated-value') {
    return { ...observation, excluded: { reason: censoredExclusionReason(observation.censored.text) } };
  }
  const stated = attribute.censoredValue;
  if (stated === null || !Number.isFinite(stated)) {
    throw new KineticsError(
      'invalid-input',
      `${attribute.name}: the study fits results below the limit at a stated value but states none (${seriesId} at time ${observation.time}, "${observation.censored.text}"); state the value on the study or choose to exclude them.`,
    );
  }
  return { ...observation, value: stated };
}

/** How many points of these series report a result below a limit. */
export function censoredCount(series: readonly Series[]): number {
  let count = 0;
  for (const entry of series) for (const point of entry.observations) if (point.censored) count += 1;
  return count;
}

/**
 * The sentence of the method statement that states the rule, for an attribute with censored
 * points; null when it has none (so a run of uncensored data states nothing new).
 *
 * Example: 'Results below the limit (Impurity B). 2 results reported below a limit ("<LOQ", "< 0.05")
 * were excluded from the fit by the study's rule; they are shown with their text.'
 */
export function censoredRuleSentence(series: readonly Series[], attribute: StudyAttribute): string | null {
  const count = censoredCount(series);
  if (count === 0) return null;
  const texts = [
    ...new Set(series.flatMap((entry) => entry.observations.flatMap((point) => point.censored?.text ?? []))),
  ];
  const quoted = texts.map((text) => `"${text}"`).join(', ');
  const results = count === 1 ? '1 result' : `${count} results`;
  const verb = count === 1 ? 'was' : 'were';
  const rule =
    attribute.censoredRule !== 'stated-value'
      ? `${verb} excluded from the fit by the study's rule`
      : `${verb} fitted at the value the study states, ${attribute.censoredValue} ${attribute.unit}`;
  return `Results below the limit (${attribute.name}). ${results} reported below a limit (${quoted}) ${rule}; they are shown with their text.`;
}
