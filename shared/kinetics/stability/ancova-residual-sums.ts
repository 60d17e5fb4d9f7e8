import { compensatedMean, compensatedSum } from '../numeric/compensated-sum.ts';
import { KineticsError } from '../numeric/kinetics-error.ts';
import type { AncovaModel } from './ancova-design.ts';
import type { TransformedBatch } from './stability-batch.ts';

/** Residual sum of squares and residual degrees of freedom of one ANCOVA model. */
export interface AncovaResidualSum {
  residualSumOfSquares: number;
  degreesOfFreedom: number;
}

interface CentredSums {
  n: number;
  sxx: number;
  sxy: number;
  syy: number;
}

function centredSums(times: readonly number[], responses: readonly number[]): CentredSums {
  const meanTime = compensatedMean(times);
  const meanResponse = compensatedMean(responses);
  const dx = times.map((time) => time - meanTime);
  const dy = responses.map((response) => response - meanResponse);
  return {
    n: times.length,
    sxx: compensatedSum(dx.map((value) => value * value)),
    sxy: compensatedSum(dx.map((value, index) => value * (dy[index] ?? 0))),
    syy: compensatedSum(dy.map((value) => value * value)),
  };
}

/**
 * Residual sums of squares of the three ANCOVA models of a stability condition, from each batch's
 * centred sums — one pass over the data, no design matrix, so 100,000 results cost milliseconds.
 *
 * Formula in words, with Sxx, Sxy, Syy the sums of squares and cross-products of time and response
 * about each batch's own means, N results and B batches:
 * - separate lines: RSS = Σ_b (Syy_b − Sxy_b² / Sxx_b), with N − 2B degrees of freedom;
 * - common slope, separate intercepts: RSS = Σ Syy_b − (Σ Sxy_b)² / Σ Sxx_b, with N − B − 1;
 * - one pooled line: the same formula over all results about the grand means, with N − 2.
 * These are the within-groups and total regressions of the analysis of covariance.
 *
 * Reference: G. W. Snedecor and W. G. Cochran, Statistical Methods, 8th ed., chapter
 * "Analysis of covariance" (from memory); the same quantities as the least-squares fits of the
 * indicator designs in `ancova-design.ts`, which the tests check against.
 *
 * Throws `KineticsError('single-time')` when a batch (or, for the pooled line, all data) has every
 * result at one time, since its slope is then undefined.
 *
 * Example: batches {t: [0, 1, 2], y: [10, 9, 8]} and {t: [0, 1, 2], y: [11, 10, 9.5]} give
 * separate RSS 1/24 ≈ 0.0417 (df 2), common-slope RSS 5/48 ≈ 0.1042 (df 3), pooled RSS
 * 103/48 ≈ 2.1458 (df 4).
 */
export function ancovaResidualSum(
  batches: readonly TransformedBatch[],
  model: AncovaModel,
): AncovaResidualSum {
  const total = batches.reduce((count, batch) => count + batch.times.length, 0);
  if (model === 'pooled') {
    const all = centredSums(
      batches.flatMap((batch) => batch.times),
      batches.flatMap((batch) => batch.responses),
    );
    if (!(all.sxx > 0))
      throw new KineticsError('single-time', 'Every result is at one time: no slope can be fitted.');
    return {
      residualSumOfSquares: Math.max(0, all.syy - (all.sxy * all.sxy) / all.sxx),
      degreesOfFreedom: total - 2,
    };
  }
  const sums = batches.map((batch) => {
    const batchSums = centredSums(batch.times, batch.responses);
    if (!(batchSums.sxx > 0)) {
      throw new KineticsError(
        'single-time',
        `Batch ${batch.batch} has every result at one time: no slope can be fitted.`,
        {
          batch: batch.batch,
        },
      );
    }
    return batchSums;
  });
  if (model === 'separate') {
    const residual = compensatedSum(
      sums.map((batch) => Math.max(0, batch.syy - (batch.sxy * batch.sxy) / batch.sxx)),
    );
    return { residualSumOfSquares: residual, degreesOfFreedom: total - 2 * batches.length };
  }
  const sxx = compensatedSum(sums.map((batch) => batch.sxx));
  const sxy = compensatedSum(sums.map((batch) => batch.sxy));
  const syy = compensatedSum(sums.map((batch) => batch.syy));
  return {
    residualSumOfSquares: Math.max(0, syy - (sxy * sxy) / sxx),
    degreesOfFreedom: total - batches.length - 1,
  };
}
