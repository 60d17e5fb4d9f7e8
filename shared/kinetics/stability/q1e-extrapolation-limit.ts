import { KineticsError } from '../numeric/kinetics-error.ts';

/** The facts of a submission that decide how far ICH Q1E lets a shelf life go beyond the data. */
export interface Q1eExtrapolationCase {
  storage: 'room-temperature' | 'refrigerated' | 'freezer';
  /** X: months covered by long-term data. */
  longTermMonths: number;
  /** Significant change (Q1A(R2) 2.2.7.1) at the accelerated condition (25/60 for refrigerated products). */
  significantChangeAccelerated: boolean;
  /** Room temperature with significant change at accelerated: was there significant change at intermediate? */
  significantChangeIntermediate?: boolean;
  /**
   * 'little-change': little or no change and little or no variability over time;
   * 'statistics-performed': change or variability, data amenable to and evaluated by statistics;
   * 'no-statistics': data not amenable to statistics, or none performed.
   */
  longTermData: 'little-change' | 'statistics-performed' | 'no-statistics';
  /** Relevant supporting data (development batches, related formulations, other conditions) exist. */
  supportingData: boolean;
}

/** Result of `q1eExtrapolationLimit`; months throughout. */
export interface Q1eExtrapolationLimit {
  extrapolationAllowed: boolean;
  /** Largest shelf life Y the case allows, months (X itself when no extrapolation is allowed). */
  maximumShelfLifeMonths: number;
  /** The "up to n·X" factor, or null for a plain "X + m months" rule or no extrapolation. */
  multipleOfLongTerm: number | null;
  /** The "not more than X + m months" extension, or null for no extrapolation. */
  monthsBeyondLongTerm: number | null;
  rule: string;
  source: string;
}

const SOURCE =
  'ICH Q1E 2.4–2.5 and Appendix A decision tree; caps from memory, outcome structure confirmed by Q1E training slides (ICH Q1E §2.4–2.5 and Appendix A (numbers from memory; outcome structure as in the ICH Q1E training material))';

function capped(x: number, multiple: number | null, extension: number, rule: string): Q1eExtrapolationLimit {
  const byMultiple = multiple === null ? Number.POSITIVE_INFINITY : multiple * x;
  return {
    extrapolationAllowed: true,
    maximumShelfLifeMonths: Math.min(byMultiple, x + extension),
    multipleOfLongTerm: multiple,
    monthsBeyondLongTerm: extension,
    rule,
    source: SOURCE,
  };
}

function none(x: number, rule: string): Q1eExtrapolationLimit {
  return {
    extrapolationAllowed: false,
    maximumShelfLifeMonths: x,
    multipleOfLongTerm: null,
    monthsBeyondLongTerm: null,
    rule,
    source: SOURCE,
  };
}

/**
 * The longest shelf life ICH Q1E allows a proposal to reach beyond the long-term data (X months),
 * from the storage category, the significant-change results and the nature of the data.
 *
 * Why: the statistical crossing time may lie far beyond the data; Q1E caps how far a proposal
 * may extrapolate, as a separate explicit step whose inputs the reviewer confirms (ICH Q1E 2.4–2.5;
 * docs/methods.md#q1e-extrapolation-limit).
 *
 * Rules (Q1E 2.4–2.5, App. A; numbers from memory): room temperature, no significant change at
 * accelerated — little change, or statistics performed: up to 2X and ≤ X + 12; otherwise with
 * supporting data: up to 1.5X and ≤ X + 6. Room temperature with significant change at
 * accelerated but not at intermediate — statistics performed with supporting data: 1.5X, X + 6;
 * otherwise with supporting data: X + 3; significant change at intermediate too: none.
 * Refrigerated, no significant change at accelerated — little change or statistics: 1.5X, X + 6;
 * otherwise with supporting data: X + 3; significant change at accelerated: none. Freezer: none.
 * Any branch that needs supporting data and has none allows no extrapolation.
 *
 * Reference: ICH Q1E "Evaluation of Stability Data" (2003), sections 2.4–2.5 and Appendix A.
 *
 * Throws `KineticsError('invalid-input')` for a long-term period that is not finite and positive,
 * or a room-temperature case with significant change at accelerated whose intermediate result is
 * not stated.
 *
 * Example: room temperature, X = 12, no significant change, statistics performed → 24 months
 * (2X = 24 and X + 12 = 24); X = 18 in the same case → 30 months (X + 12 is the stricter cap).
 */
export function q1eExtrapolationLimit(input: Q1eExtrapolationCase): Q1eExtrapolationLimit {
  const x = input.longTermMonths;
  if (!(Number.isFinite(x) && x > 0)) {
    throw new KineticsError(
      'invalid-input',
      `The long-term period must be a positive number of months; got ${x}.`,
    );
  }
  const { longTermData, supportingData } = input;
  if (input.storage === 'freezer') {
    return none(
      x,
      'Freezer storage: no extrapolation; address excursions with a single batch at a higher temperature.',
    );
  }
  if (input.storage === 'refrigerated') {
    if (input.significantChangeAccelerated) {
      return none(x, 'Refrigerated, significant change at the accelerated condition: no extrapolation.');
    }
    if (longTermData !== 'no-statistics') {
      return capped(
        x,
        1.5,
        6,
        'Refrigerated, no significant change: up to 1.5X, not more than X + 6 months.',
      );
    }
    return supportingData
      ? capped(
          x,
          null,
          3,
          'Refrigerated, not analysed statistically, supporting data: not more than X + 3 months.',
        )
      : none(x, 'Refrigerated, not analysed statistically and no supporting data: no extrapolation.');
  }
  if (!input.significantChangeAccelerated) {
    if (longTermData !== 'no-statistics') {
      return capped(
        x,
        2,
        12,
        'Room temperature, no significant change at accelerated: up to 2X, not more than X + 12 months.',
      );
    }
    return supportingData
      ? capped(
          x,
          1.5,
          6,
          'Room temperature, not analysed statistically, supporting data: up to 1.5X, not more than X + 6 months.',
        )
      : none(x, 'Room temperature, not analysed statistically and no supporting data: no extrapolation.');
  }
  if (input.significantChangeIntermediate === undefined) {
    throw new KineticsError(
      'invalid-input',
      'With significant change at accelerated, state whether there was significant change at intermediate.',
    );
  }
  if (input.significantChangeIntermediate) {
    return none(x, 'Significant change at accelerated and intermediate: no extrapolation.');
  }
  if (!supportingData) {
    return none(x, 'Significant change at accelerated and no supporting data: no extrapolation.');
  }
  return longTermData === 'statistics-performed'
    ? capped(
        x,
        1.5,
        6,
        'Significant change at accelerated only, statistics and supporting data: up to 1.5X, not more than X + 6 months.',
      )
    : capped(
        x,
        null,
        3,
        'Significant change at accelerated only, no statistics, supporting data: not more than X + 3 months.',
      );
}
