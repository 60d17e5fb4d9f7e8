import type { Q1eExtrapolationLimit } from './q1e-extrapolation-limit.ts';
import type { Q1eShelfLife } from './q1e-shelf-life.ts';

/** The Q1E allowance of one condition as reported: the cap in the data's time unit, and why. */
export interface Q1eExtrapolationAllowance {
  /** Largest shelf life allowed, in the data's time unit; null when none applies to this condition. */
  value: number | null;
  valueMonths: number | null;
  /** X, months covered by the long-term data; null when not evaluated. */
  longTermMonths: number | null;
  rule: string;
  branch: string;
  /** The decision-tree answers taken, in words. */
  branchText: string;
  section: string | null;
  assumptions: string[];
  /** What the data themselves showed (significant change, the period X). */
  findings: string[];
  notes: string[];
}

/** The shelf life a condition proposes: never above the statistical estimate nor above the allowance. */
export interface Q1eProposal {
  /** Whole months expressed in the data's time unit, or null with `proposedReason`. */
  proposedShelfLife: number | null;
  proposedShelfLifeMonths: number | null;
  proposedReason: string | null;
  limitedBy: 'statistical-estimate' | 'extrapolation-limit' | null;
  /** The statistical estimate runs past the allowance; null when either is missing. */
  estimateExceedsLimit: boolean | null;
  /** The outcome in plain words, for the screen, the report and the method statement. */
  statement: string;
  extrapolationLimit: Q1eExtrapolationAllowance;
}

/** A rule value within this relative distance of a whole month is that month (unit conversion noise). */
const WHOLE_MONTH_SNAP = 1e-9;
const formatNumber = (value: number) => String(Number(value.toPrecision(4)));

/** `value` months rounded down to a whole month; a value a conversion put a hair below a whole month snaps up to it. */
export function wholeMonthsDown(value: number, snap = false): number {
  const nearest = Math.round(value);
  if (snap && Math.abs(value - nearest) <= WHOLE_MONTH_SNAP * Math.max(1, Math.abs(value))) return nearest;
  return Math.floor(value);
}

/** X snapped to a whole month when a unit conversion only blurred it (273.9375 d → 9 months). */
export function snappedMonths(value: number): number {
  const nearest = Math.round(value);
  return Math.abs(value - nearest) <= WHOLE_MONTH_SNAP * Math.max(1, Math.abs(value)) ? nearest : value;
}

/** The allowance record of a `q1eExtrapolationLimit` result, in the data's time unit. */
export function allowanceOf(
  limit: Q1eExtrapolationLimit,
  monthsPerTimeUnit: number,
  findings: string[],
): Q1eExtrapolationAllowance {
  return {
    value: limit.maximumShelfLifeMonths / monthsPerTimeUnit,
    valueMonths: limit.maximumShelfLifeMonths,
    longTermMonths: limit.longTermMonths,
    rule: limit.rule,
    branch: limit.branch,
    branchText: limit.path.join('; '),
    section: limit.section,
    assumptions: limit.assumptions,
    findings,
    notes: limit.notes,
  };
}

/** An allowance that does not apply (a condition that is not long-term, or nothing to evaluate). */
export function noAllowance(
  branch: string,
  rule: string,
  findings: string[] = [],
): Q1eExtrapolationAllowance {
  return {
    value: null,
    valueMonths: null,
    longTermMonths: null,
    rule,
    branch,
    branchText: '',
    section: null,
    assumptions: [],
    findings,
    notes: [],
  };
}

/** No proposal, with the reason. */
export function noProposal(reason: string, allowance: Q1eExtrapolationAllowance): Q1eProposal {
  return {
    proposedShelfLife: null,
    proposedShelfLifeMonths: null,
    proposedReason: reason,
    limitedBy: null,
    estimateExceedsLimit: null,
    statement: `No shelf life is proposed: ${reason.charAt(0).toLowerCase()}${reason.slice(1)}`,
    extrapolationLimit: allowance,
  };
}

/**
 * The proposed shelf life of the long-term condition: the smaller of the statistical estimate and
 * the Q1E allowance, rounded down to a whole month (common practice: never rounded up), given in
 * the data's time unit and said in plain words.
 *
 * Why: the crossing time of the confidence limit (ICH Q1E App. B.1) is a statistical estimate
 * that may lie far past the data; ICH Q1E §2.4–2.5 and Appendix A cap how far a proposal may go.
 * A crossing beyond the searched horizon (4 × the longest time, at least twice any allowance)
 * means the estimate exceeds the allowance, so the allowance is proposed.
 *
 * Throws nothing.
 *
 * Example: an estimate of 34.07 months and an allowance of 18 months ("up to 2X, not more than
 * X + 12 months", X = 9) propose 18 months, limited by the extrapolation limit.
 */
export function proposedShelfLife(
  estimate: Q1eShelfLife,
  allowance: Q1eExtrapolationAllowance,
  monthsPerTimeUnit: number,
  timeUnit: string,
): Q1eProposal {
  const allowedMonths = allowance.valueMonths;
  if (allowedMonths === null || allowance.value === null) {
    return noProposal('No extrapolation allowance could be evaluated.', allowance);
  }
  const x = formatNumber(allowance.longTermMonths ?? 0);
  const cap = `${formatNumber(allowedMonths)} months (${allowance.rule}; ${allowance.section ?? 'ICH Q1E'})`;
  let estimateMonths: number;
  let estimateText: string;
  if (estimate.shelfLife !== null) {
    estimateMonths = estimate.shelfLife * monthsPerTimeUnit;
    estimateText = `${formatNumber(estimate.shelfLife)} ${timeUnit}`;
  } else if (allowance.value <= estimate.horizon) {
    estimateMonths = Number.POSITIVE_INFINITY;
    estimateText = `beyond ${formatNumber(estimate.horizon)} ${timeUnit} (no crossing within the searched range)`;
  } else {
    return noProposal(
      `The confidence limit does not meet the criterion within the searched ${formatNumber(estimate.horizon)} ${timeUnit}, which is shorter than the allowance.`,
      allowance,
    );
  }
  const exceeds = estimateMonths > allowedMonths;
  const months = exceeds ? wholeMonthsDown(allowedMonths, true) : wholeMonthsDown(estimateMonths);
  const proposedText = `${months} month${months === 1 ? '' : 's'}`;
  const statement = exceeds
    ? `The statistical estimate (${estimateText}) runs past what ICH Q1E allows from ${x} months of long-term data: ${cap}. Proposed: ${proposedText}, the allowance rounded down to a whole month.`
    : months === 0
      ? `The statistical estimate (${estimateText}) is under one whole month: no shelf life of a whole month is supported (the allowance from ${x} months of long-term data is ${cap}).`
      : `The statistical estimate (${estimateText}) lies within what ICH Q1E allows from ${x} months of long-term data: ${cap}. Proposed: ${proposedText}, the estimate rounded down to a whole month.`;
  return {
    // Whole months back in the data's unit, never a rounding hair above the estimate or the allowance.
    proposedShelfLife: Math.min(
      months / monthsPerTimeUnit,
      allowance.value,
      estimate.shelfLife ?? Number.POSITIVE_INFINITY,
    ),
    proposedShelfLifeMonths: months,
    proposedReason: null,
    limitedBy: exceeds ? 'extrapolation-limit' : 'statistical-estimate',
    estimateExceedsLimit: exceeds,
    statement,
    extrapolationLimit: allowance,
  };
}
