import { KineticsError } from '../numeric/kinetics-error.ts';
import type { DeclaredAnswer, DeclaredChange, StorageCategory } from './q1e-declaration.ts';

/** The facts of one attribute's evaluation that decide how far ICH Q1E lets a shelf life go past the data. */
export interface Q1eExtrapolationCase {
  storage: StorageCategory;
  /** X: months covered by the long-term data. */
  longTermMonths: number;
  /** Significant change at the accelerated condition (declared, or shown by the data). */
  acceleratedChange: DeclaredChange;
  /** Significant change at the intermediate condition; consulted only after one at accelerated. */
  intermediateChange: DeclaredChange;
  littleChange: DeclaredAnswer;
  /** The long-term data were amenable to statistical analysis and it was performed (this analysis). */
  statisticsPerformed: boolean;
  supportingData: DeclaredAnswer;
  /** The significant change at accelerated was seen within the first 3 months (refrigerated products). */
  acceleratedChangeWithinThreeMonths?: boolean;
  /** Long-term temperature, °C, for the note on storage below −20 °C. */
  longTermTemperatureC?: number | null;
}

/** Result of `q1eExtrapolationLimit`; months throughout. */
export interface Q1eExtrapolationLimit {
  extrapolationAllowed: boolean;
  longTermMonths: number;
  /** Largest shelf life Y the branch allows, months (X itself when no extrapolation is allowed). */
  maximumShelfLifeMonths: number;
  /** The "up to n·X" factor, or null for a plain "X + m months" rule or no extrapolation. */
  multipleOfLongTerm: number | null;
  /** The "not more than X + m months" extension, or null for no extrapolation. */
  monthsBeyondLongTerm: number | null;
  /** The allowance in words, e.g. "up to 2X, not more than X + 12 months". */
  rule: string;
  /** Stable id of the decision-tree branch taken, e.g. 'room-temperature.statistics-and-supporting-data'. */
  branch: string;
  /** The answers taken on the way, in words and in order. */
  path: string[];
  /** The section of ICH Q1E the branch rests on. */
  section: string;
  /** Every unstated fact the branch consulted, with the conservative answer taken for it. */
  assumptions: string[];
  /** What the guideline adds on this branch (shorter shelf life, excursions). */
  notes: string[];
}

const RULES = {
  twiceOrTwelve: { multiple: 2, extension: 12, rule: 'up to 2X, not more than X + 12 months' },
  oneAndHalfOrSix: { multiple: 1.5, extension: 6, rule: 'up to 1.5X, not more than X + 6 months' },
  threeMonths: { multiple: null, extension: 3, rule: 'not more than X + 3 months' },
} as const;
type Rule = (typeof RULES)[keyof typeof RULES];

const SHORTER_NOTE =
  'A shelf life shorter than the period covered by long-term data could be called for; statistical analysis can verify it if the long-term data show variability.';

/**
 * The longest shelf life ICH Q1E allows a proposal to reach from X months of long-term data: the
 * Appendix A decision tree, with §2.4 for room-temperature storage, §2.5.1 for refrigerated and
 * §2.5.2 for frozen products.
 *
 * Why: a statistical crossing time may lie far beyond the data, and Q1E limits how far a proposal
 * may extrapolate by what is known about the product, not by the regression alone. Every fact
 * the case leaves `unknown` takes the answer that allows least — significant change occurred,
 * the data show change or variability, no supporting data, and no extrapolation at all when the
 * storage category is not stated — and is named in `assumptions`.
 *
 * Rules (ICH Q1E 2003; the numbers and branch wording from memory, their structure "12 / 6 / 3
 * months / no extrapolation" confirmed by the Q1E training material):
 * - Room temperature, no significant change at accelerated: little change and variability →
 *   up to 2X, ≤ X + 12 (§2.4.1.1); otherwise statistics performed and supporting data → the same
 *   (§2.4.1.2.2); supporting data without statistics → up to 1.5X, ≤ X + 6 (§2.4.1.2.1).
 * - Room temperature, significant change at accelerated, none at intermediate: little change →
 *   up to 1.5X, ≤ X + 6 (§2.4.2.1.1); statistics and supporting data → the same; supporting data
 *   only → ≤ X + 3 (§2.4.2.1.2). Significant change at intermediate too → none (§2.4.2.2).
 * - Refrigerated: as room temperature but more limited (§2.5.1.1): little change, or statistics
 *   and supporting data → up to 1.5X, ≤ X + 6; supporting data only → ≤ X + 3. Significant
 *   change at accelerated → none (§2.5.1.2). Frozen → none (§2.5.2).
 * - A branch whose extension Q1E grants only "backed by relevant supporting data" allows none
 *   without them (the guideline names no figure there; Rateledger takes the conservative reading).
 *
 * Throws `KineticsError('invalid-input')` for an X that is not finite and positive.
 *
 * Example: room temperature, X = 9, no significant change declared, statistics performed,
 * supporting data declared → 18 months (2X = 18 < X + 12 = 21), branch
 * 'room-temperature.statistics-and-supporting-data', with the assumption that the data show
 * change or variability when "little change" was not stated.
 */
export function q1eExtrapolationLimit(input: Q1eExtrapolationCase): Q1eExtrapolationLimit {
  const x = input.longTermMonths;
  if (!(Number.isFinite(x) && x > 0)) {
    throw new KineticsError(
      'invalid-input',
      `The period covered by long-term data must be a positive number of months; got ${x}.`,
    );
  }
  const path: string[] = [];
  const assumptions: string[] = [];
  const notes: string[] = [];
  const finish = (branch: string, section: string, rule: Rule | null): Q1eExtrapolationLimit => ({
    extrapolationAllowed: rule !== null,
    longTermMonths: x,
    maximumShelfLifeMonths:
      rule === null
        ? x
        : Math.min(rule.multiple === null ? Number.POSITIVE_INFINITY : rule.multiple * x, x + rule.extension),
    multipleOfLongTerm: rule?.multiple ?? null,
    monthsBeyondLongTerm: rule?.extension ?? null,
    rule: rule?.rule ?? 'no extrapolation: not beyond X, the period covered by long-term data',
    branch,
    path,
    section,
    assumptions,
    notes,
  });

  const changeAt = (condition: 'accelerated' | 'intermediate', value: DeclaredChange) => {
    if (value === 'unknown') {
      assumptions.push(
        `Significant change at the ${condition} condition not stated: taken as having occurred (the conservative branch).`,
      );
    }
    const significant = value !== 'none';
    path.push(
      `${significant ? 'significant change' : 'no significant change'} at the ${condition} condition${value === 'unknown' ? ' (assumed)' : ''}`,
    );
    return significant;
  };
  const littleChange = () => {
    if (input.littleChange === 'unknown') {
      assumptions.push(
        'Little or no change and variability not stated: the data are read as showing change or variability.',
      );
    }
    const little = input.littleChange === 'yes';
    path.push(
      little
        ? 'little or no change and little or no variability'
        : `change over time or variability${input.littleChange === 'unknown' ? ' (assumed)' : ''}`,
    );
    return little;
  };
  const supporting = () => {
    if (input.supportingData === 'unknown') {
      assumptions.push('Relevant supporting data not stated: taken as absent.');
    }
    const present = input.supportingData === 'yes';
    path.push(
      present
        ? 'relevant supporting data'
        : `no relevant supporting data${input.supportingData === 'unknown' ? ' (assumed)' : ''}`,
    );
    return present;
  };
  /** The shared lower part of the tree: statistics and supporting data decide the extension. */
  const byData = (prefix: string, section: string, statisticsRule: Rule, supportingOnlyRule: Rule) => {
    path.push(
      input.statisticsPerformed
        ? 'long-term data amenable to statistical analysis, analysis performed'
        : 'long-term data not amenable to statistical analysis here',
    );
    if (!supporting()) {
      notes.push(
        'ICH Q1E grants this extension only when backed by relevant supporting data; without them no extrapolation is allowed.',
      );
      return finish(`${prefix}.no-supporting-data`, section, null);
    }
    return input.statisticsPerformed
      ? finish(`${prefix}.statistics-and-supporting-data`, section, statisticsRule)
      : finish(`${prefix}.supporting-data-only`, section, supportingOnlyRule);
  };

  if (input.storage === 'unknown') {
    path.push('storage category not stated');
    assumptions.push(
      'Storage category (room temperature, refrigerated, frozen) not stated: no extrapolation, the most conservative branch (as for frozen products).',
    );
    return finish('storage-not-stated', 'ICH Q1E §2.5.2, the most conservative branch', null);
  }
  if (input.storage === 'frozen') {
    path.push('frozen storage');
    notes.push(
      'The shelf life rests on long-term data; address short-term excursions by testing a single batch at an elevated temperature (e.g. 5 °C or 25 °C).',
    );
    if (
      input.longTermTemperatureC !== null &&
      input.longTermTemperatureC !== undefined &&
      input.longTermTemperatureC < -20
    ) {
      notes.push('Storage below −20 °C is assessed case by case (ICH Q1E §2.5.3).');
    }
    return finish('frozen', 'ICH Q1E §2.5.2', null);
  }
  if (input.storage === 'refrigerated') {
    path.push('refrigerated storage');
    if (changeAt('accelerated', input.acceleratedChange)) {
      notes.push(SHORTER_NOTE);
      if (input.acceleratedChangeWithinThreeMonths !== false) {
        notes.push(
          'If the significant change occurred within the first 3 months at the accelerated condition, discuss the effect of short-term excursions outside the label storage condition (e.g. during shipment), if appropriate with a single batch tested for less than 3 months.',
        );
      }
      return finish('refrigerated.accelerated-change', 'ICH Q1E §2.5.1.2', null);
    }
    if (littleChange())
      return finish('refrigerated.little-change', 'ICH Q1E §2.5.1.1', RULES.oneAndHalfOrSix);
    return byData('refrigerated', 'ICH Q1E §2.5.1.1', RULES.oneAndHalfOrSix, RULES.threeMonths);
  }
  path.push('room-temperature storage');
  if (!changeAt('accelerated', input.acceleratedChange)) {
    if (littleChange())
      return finish('room-temperature.little-change', 'ICH Q1E §2.4.1.1', RULES.twiceOrTwelve);
    return byData(
      'room-temperature',
      input.statisticsPerformed ? 'ICH Q1E §2.4.1.2.2' : 'ICH Q1E §2.4.1.2.1',
      RULES.twiceOrTwelve,
      RULES.oneAndHalfOrSix,
    );
  }
  if (changeAt('intermediate', input.intermediateChange)) {
    notes.push(SHORTER_NOTE);
    return finish('room-temperature.accelerated-and-intermediate-change', 'ICH Q1E §2.4.2.2', null);
  }
  if (littleChange()) {
    return finish(
      'room-temperature.accelerated-change.little-change',
      'ICH Q1E §2.4.2.1.1',
      RULES.oneAndHalfOrSix,
    );
  }
  return byData(
    'room-temperature.accelerated-change',
    'ICH Q1E §2.4.2.1.2',
    RULES.oneAndHalfOrSix,
    RULES.threeMonths,
  );
}
