import { compensatedMean } from '../numeric/compensated-sum.ts';
import type { TransformedBatch } from './stability-batch.ts';

/**
 * The three ANCOVA models of ICH Q1E Appendix B.2, in the names of LeBlond et al. (2011):
 * - 'separate' (SISS): separate intercepts and separate slopes, one line per batch;
 * - 'common-slope' (SICS): separate intercepts, one slope shared by all batches;
 * - 'pooled' (CICS): one intercept and one slope for all data.
 */
export type AncovaModel = 'separate' | 'common-slope' | 'pooled';

/** A design matrix with the meaning of its columns. */
export interface AncovaDesign {
  rows: number[][];
  response: number[];
  /** Time at which the columns are centred (the mean time of all results). */
  centreTime: number;
  /** For each batch, the column of its intercept (value at `centreTime`) and of its slope. */
  columns: { batch: string; intercept: number; slope: number }[];
}

/**
 * Builds the indicator design matrix of one ANCOVA model for the batches of a study.
 *
 * Formula in words: one row per result. 'separate' has, per batch b, an indicator column
 * (1 for b's rows) and an indicator × (t − t̄) column; 'common-slope' has the indicator columns
 * and one (t − t̄) column; 'pooled' has a column of ones and one (t − t̄) column. Time is
 * centred at the mean time t̄ of all results, which leaves the fitted lines and residual sums
 * of squares unchanged but makes the columns nearly orthogonal (better conditioned).
 *
 * Reference: LeBlond, Griffith & Aubuchon, "Linear Regression 102: Stability Shelf Life
 * Estimation Using Analysis of Covariance", J. Valid. Technol. 17(3) 2011
 * (docs/methods.md#batch-poolability).
 *
 * Throws nothing itself; the batches come validated from `transformedStabilityBatches`.
 *
 * Example: batches A (t = 0, 6) and B (t = 0, 6) under 'common-slope' give t̄ = 3 and rows
 * [1,0,−3], [1,0,3], [0,1,−3], [0,1,3].
 */
export function ancovaDesign(batches: readonly TransformedBatch[], model: AncovaModel): AncovaDesign {
  const centreTime = compensatedMean(batches.flatMap((batch) => batch.times));
  const batchCount = batches.length;
  const rows: number[][] = [];
  const response: number[] = [];
  batches.forEach((batch, b) => {
    batch.times.forEach((time, i) => {
      const centred = time - centreTime;
      let row: number[];
      if (model === 'pooled') {
        row = [1, centred];
      } else if (model === 'common-slope') {
        row = [...batches.map((_, c) => (c === b ? 1 : 0)), centred];
      } else {
        row = [
          ...batches.map((_, c) => (c === b ? 1 : 0)),
          ...batches.map((_, c) => (c === b ? centred : 0)),
        ];
      }
      rows.push(row);
      response.push(batch.responses[i] ?? 0);
    });
  });
  const columns = batches.map((batch, b) => {
    if (model === 'pooled') {
      return { batch: batch.batch, intercept: 0, slope: 1 };
    }
    if (model === 'common-slope') {
      return { batch: batch.batch, intercept: b, slope: batchCount };
    }
    return { batch: batch.batch, intercept: b, slope: batchCount + b };
  });
  return { rows, response, centreTime, columns };
}
