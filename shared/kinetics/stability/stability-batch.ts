/**
 * Input vocabulary of the ICH Q1E evaluation: the batches of one product at one storage
 * condition, and the scale on which the attribute is regressed on time.
 */

/** One batch (lot) of a stability study: its results over time at one condition. */
export interface StabilityBatch {
  /** Batch identifier; unique within a study. */
  batch: string;
  /** Time since the start of the study (one unit for every batch, usually months) and the result. */
  observations: { time: number; value: number }[];
}

/**
 * Scale of the regression, chosen by the reaction order:
 * - 'none': the value itself (zero order, straight-line loss);
 * - 'ln': the natural logarithm (first order, constant fractional loss);
 * - '1/x': the reciprocal (second order). The reciprocal reverses the order of values, so a
 *   decreasing attribute rises on this scale and its lower limit becomes an upper limit there.
 * Acceptance limits are transformed the same way as the values.
 */
export type StabilityTransform = 'none' | 'ln' | '1/x';

/** A batch after validation and transformation: times and transformed responses. */
export interface TransformedBatch {
  batch: string;
  times: number[];
  responses: number[];
}
