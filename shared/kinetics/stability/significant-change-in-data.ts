import type { AttributeDirection } from '../types.ts';
import type { StabilityBatch } from './stability-batch.ts';

/** What the data of one attribute at one condition show about significant change. */
export interface SignificantChangeInData {
  shown: boolean;
  /** Earliest time, in months, at which a batch showed it (null when not shown or months unknown). */
  firstMonth: number | null;
  /** One sentence per batch that showed it, naming the result and the criterion. */
  findings: string[];
}

export interface SignificantChangeOptions {
  direction: AttributeDirection;
  lowerLimit?: number;
  upperLimit?: number;
  /** Months per time unit of the data; null when the unit does not convert (then every result counts). */
  monthsPerTimeUnit: number | null;
  /** Only results up to this many months count (6 at the accelerated condition); null for all. */
  windowMonths: number | null;
  /** The condition in words, for the findings ("40 °C"). */
  conditionLabel: string;
}

/** The loss from the initial value that is a significant change of an assay (ICH Q1A(R2) §2.2.7.1). */
export const ASSAY_SIGNIFICANT_CHANGE_FRACTION = 0.05;
/** Relative slack on the 5 % comparison, so that a loss of exactly 5 % in decimal arithmetic counts. */
const RELATIVE_SLACK = 1e-12;

const formatNumber = (value: number) => String(Number(value.toPrecision(4)));

/** Mean result per pull time of one batch, in time order (replicates averaged: the reportable result). */
function meansByTime(batch: StabilityBatch): { time: number; value: number }[] {
  const groups = new Map<number, number[]>();
  for (const { time, value } of batch.observations) groups.set(time, [...(groups.get(time) ?? []), value]);
  return [...groups]
    .sort(([a], [b]) => a - b)
    .map(([time, values]) => ({ time, value: values.reduce((sum, v) => sum + v, 0) / values.length }));
}

/**
 * Whether the results of the attribute analysed show a significant change at a condition. The
 * data can show one; they can never show its absence, which is a statement about every attribute
 * of the product — so a "not shown" here changes nothing, while a "shown" overrides a declaration
 * of no significant change.
 *
 * Why: ICH Q1E Appendix A branches on significant change at the accelerated and intermediate
 * conditions, defined in ICH Q1A(R2) §2.2.7.1 for a drug product and §2.1.7.1 for a drug substance.
 *
 * Rules, per batch on the mean result at each pull time within the window:
 * - a result outside the acceptance criterion — "failure to meet its specification" for a drug
 *   substance (§2.1.7.1); a degradation product over its criterion or another criterion failed
 *   for a drug product (§2.2.7.1);
 * - for a decreasing attribute (an assay), a result 5 % or more below its initial value —
 *   "a 5 % change in assay from its initial value" (§2.2.7.1), read relative to the batch's first
 *   result (common practice reads it in % of label claim, the same for results near 100 %).
 *
 * Throws nothing.
 *
 * Example: a batch at 40 °C with 100.2, 98.1, 94.9 % at 0, 3, 6 months (decreasing, lower limit
 * 95) shows it at 6 months twice: 94.9 is below the limit and 5.3 % below 100.2.
 */
export function significantChangeInData(
  batches: readonly StabilityBatch[],
  options: SignificantChangeOptions,
): SignificantChangeInData {
  const findings: string[] = [];
  let firstMonth: number | null = null;
  for (const batch of batches) {
    const means = meansByTime(batch);
    const initial = means[0];
    if (!initial) continue;
    const inWindow = means.filter(
      (point) =>
        options.windowMonths === null ||
        options.monthsPerTimeUnit === null ||
        point.time * options.monthsPerTimeUnit <= options.windowMonths * (1 + RELATIVE_SLACK),
    );
    const failing = inWindow.find((point) => {
      const outsideLimit =
        (options.lowerLimit !== undefined && point.value < options.lowerLimit) ||
        (options.upperLimit !== undefined && point.value > options.upperLimit);
      const assayLoss =
        options.direction === 'decreasing' &&
        initial.value > 0 &&
        initial.value - point.value >=
          ASSAY_SIGNIFICANT_CHANGE_FRACTION * initial.value * (1 - RELATIVE_SLACK);
      return outsideLimit || assayLoss;
    });
    if (!failing) continue;
    const reasons: string[] = [];
    if (options.lowerLimit !== undefined && failing.value < options.lowerLimit)
      reasons.push(`below the lower limit ${formatNumber(options.lowerLimit)}`);
    if (options.upperLimit !== undefined && failing.value > options.upperLimit)
      reasons.push(`above the upper limit ${formatNumber(options.upperLimit)}`);
    const loss = (initial.value - failing.value) / initial.value;
    if (
      options.direction === 'decreasing' &&
      loss >= ASSAY_SIGNIFICANT_CHANGE_FRACTION * (1 - RELATIVE_SLACK)
    )
      reasons.push(`${formatNumber(loss * 100)} % below its initial ${formatNumber(initial.value)}`);
    const when =
      options.monthsPerTimeUnit === null
        ? `time ${formatNumber(failing.time)}`
        : `${formatNumber(failing.time * options.monthsPerTimeUnit)} months`;
    findings.push(
      `${batch.batch.includes(options.conditionLabel) ? batch.batch : `${batch.batch} at ${options.conditionLabel}`}: ${formatNumber(failing.value)} at ${when}, ${reasons.join(' and ')} (significant change, ICH Q1A(R2) §2.2.7.1, §2.1.7.1).`,
    );
    if (options.monthsPerTimeUnit !== null) {
      const month = failing.time * options.monthsPerTimeUnit;
      firstMonth = firstMonth === null ? month : Math.min(firstMonth, month);
    }
  }
  return { shown: findings.length > 0, firstMonth, findings };
}
