/**
 * What a study states about its conditions for the ICH Q1E extrapolation decision, in the
 * engine's vocabulary: the storage category, which temperature plays which role, and the facts
 * the data of one attribute cannot establish on their own.
 *
 * Why a declaration: the Q1E decision tree (Appendix A) turns on facts about the whole
 * submission — the label storage, significant change (ICH Q1A(R2) §2.2.7.1 for a drug product,
 * §2.1.7.1 for a drug substance) in *any* attribute at the accelerated and intermediate
 * conditions, the nature of the long-term data, relevant supporting data. The data of the one
 * attribute analysed can show a significant change, never its absence across all attributes.
 * So every fact is three-valued, and `unknown` — nobody stated it — always takes the most
 * conservative branch, named as an assumption (`q1eExtrapolationLimit`).
 *
 * Throws nothing (types and constants only).
 *
 * Example: `{ storage: 'room-temperature', longTermTemperatureC: 25, acceleratedTemperatureC: 40,
 * acceleratedChange: 'none', supportingData: 'yes' }` leaves the intermediate condition, its
 * significant change and "little change" unknown.
 */

/** Label storage of the product, which selects ICH Q1E §2.4 (room temperature) or §2.5.1/§2.5.2. */
export const STORAGE_CATEGORIES = ['unknown', 'room-temperature', 'refrigerated', 'frozen'] as const;
export type StorageCategory = (typeof STORAGE_CATEGORIES)[number];

/** Whether a condition showed significant change (ICH Q1A(R2) §2.2.7.1 / §2.1.7.1). */
export const DECLARED_CHANGES = ['unknown', 'none', 'significant'] as const;
export type DeclaredChange = (typeof DECLARED_CHANGES)[number];

/** A yes/no fact that may not have been stated. */
export const DECLARED_ANSWERS = ['unknown', 'yes', 'no'] as const;
export type DeclaredAnswer = (typeof DECLARED_ANSWERS)[number];

/** The role a storage condition (a temperature of the data) plays in the study. */
export type ConditionRole = 'long-term' | 'intermediate' | 'accelerated' | 'not-declared';

export interface Q1eDeclaration {
  storage: StorageCategory;
  /** The long-term condition; by default the storage temperature the shelf life is claimed for. */
  longTermTemperatureC: number | null;
  intermediateTemperatureC: number | null;
  /** The accelerated condition (e.g. 40 °C for room temperature, 25 °C for a refrigerated product). */
  acceleratedTemperatureC: number | null;
  /** Significant change at the accelerated condition within its 6 months, in any attribute. */
  acceleratedChange: DeclaredChange;
  /** Significant change at the intermediate condition, in any attribute. */
  intermediateChange: DeclaredChange;
  /**
   * The long-term data, with the accelerated (or intermediate) data they are read with, show
   * little or no change over time and little or no variability (ICH Q1E §2.4.1.1, §2.4.2.1.1).
   */
  littleChange: DeclaredAnswer;
  /** Relevant supporting data exist (ICH Q1E §2.4.1.2.1: development batches, related formulations…). */
  supportingData: DeclaredAnswer;
}

/** Nothing stated: every fact unknown, no condition declared. */
export const UNSTATED_DECLARATION: Q1eDeclaration = {
  storage: 'unknown',
  longTermTemperatureC: null,
  intermediateTemperatureC: null,
  acceleratedTemperatureC: null,
  acceleratedChange: 'unknown',
  intermediateChange: 'unknown',
  littleChange: 'unknown',
  supportingData: 'unknown',
};

/** Two temperatures name the same condition when they differ by less than this (°C). */
export const SAME_CONDITION_TOLERANCE_C = 1e-6;

/**
 * The role of a condition at `temperatureC` under the declaration. The long-term condition wins
 * over intermediate, intermediate over accelerated, if a declaration names one temperature twice.
 */
export function conditionRole(declaration: Q1eDeclaration, temperatureC: number | null): ConditionRole {
  if (temperatureC === null) return 'not-declared';
  const same = (declared: number | null) =>
    declared !== null && Math.abs(declared - temperatureC) < SAME_CONDITION_TOLERANCE_C;
  if (same(declaration.longTermTemperatureC)) return 'long-term';
  if (same(declaration.intermediateTemperatureC)) return 'intermediate';
  if (same(declaration.acceleratedTemperatureC)) return 'accelerated';
  return 'not-declared';
}
