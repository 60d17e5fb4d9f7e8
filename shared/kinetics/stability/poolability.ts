import { compensatedMean, compensatedSum } from '../numeric/compensated-sum.ts';
import { fDistributionUpperTail } from '../numeric/f-distribution-upper-tail.ts';
import { KineticsError } from '../numeric/kinetics-error.ts';
import type { AncovaModel } from './ancova-design.ts';
import { ancovaResidualSum } from './ancova-residual-sums.ts';
import type { StabilityBatch, StabilityTransform, TransformedBatch } from './stability-batch.ts';
import { transformedStabilityBatches } from './transformed-stability-batches.ts';

/** ICH Q1E App. B.2 / Q1A(R2) 2.2.9: reject equality only when p < 0.25. */
export const Q1E_POOLABILITY_SIGNIFICANCE = 0.25;
/** A full-model residual sum of squares below this fraction of the total counts as an exact fit. */
const EXACT_FIT_TOLERANCE = 1e-24;

/** One extra-sum-of-squares F test between nested ANCOVA models. */
export interface NestedModelTest {
  fullModel: AncovaModel;
  reducedModel: AncovaModel;
  fStatistic: number;
  /** [numerator, denominator] degrees of freedom. */
  degreesOfFreedom: [number, number];
  pValue: number;
  residualSumOfSquaresFull: number;
  residualSumOfSquaresReduced: number;
  /** p ≥ significance: equality is not rejected, the reduced model is kept. */
  equalityAccepted: boolean;
}

/** Result of `poolability`; JSON-serialisable. */
export interface PoolabilityResult {
  significance: number;
  scale: StabilityTransform;
  batchCount: number;
  n: number;
  slopeTest: NestedModelTest;
  /** Null when the slopes differ (the intercept test is then not made). */
  interceptTest: NestedModelTest | null;
  interceptTestSkippedReason: string | null;
  decision: AncovaModel;
  explanation: string;
}

function nestedTest(
  batches: readonly TransformedBatch[],
  fullModel: AncovaModel,
  reducedModel: AncovaModel,
  significance: number,
): NestedModelTest {
  const fitModel = (model: AncovaModel) => ancovaResidualSum(batches, model);
  const full = fitModel(fullModel);
  const reduced = fitModel(reducedModel);
  const responses = batches.flatMap((batch) => batch.responses);
  const mean = compensatedMean(responses);
  const totalSumOfSquares = compensatedSum(responses.map((y) => (y - mean) ** 2));
  if (full.residualSumOfSquares <= EXACT_FIT_TOLERANCE * totalSumOfSquares) {
    throw new KineticsError(
      'zero-variance',
      `The ${fullModel} model fits the data exactly, so there is no residual variance to test ${reducedModel} against.`,
      { fullModel, residualSumOfSquares: full.residualSumOfSquares },
    );
  }
  const numeratorDf = reduced.degreesOfFreedom - full.degreesOfFreedom;
  const denominatorDf = full.degreesOfFreedom;
  const extra = Math.max(0, reduced.residualSumOfSquares - full.residualSumOfSquares);
  const fStatistic = extra / numeratorDf / (full.residualSumOfSquares / denominatorDf);
  const pValue = fDistributionUpperTail(fStatistic, numeratorDf, denominatorDf);
  return {
    fullModel,
    reducedModel,
    fStatistic,
    degreesOfFreedom: [numeratorDf, denominatorDf],
    pValue,
    residualSumOfSquaresFull: full.residualSumOfSquares,
    residualSumOfSquaresReduced: reduced.residualSumOfSquares,
    equalityAccepted: pValue >= significance,
  };
}

/**
 * ICH Q1E batch poolability: may the batches of one condition share a regression line?
 *
 * Why: pooling gives more degrees of freedom and a narrower confidence limit, hence a longer
 * and better supported shelf life — but only if the batches behave alike. ICH tests this at
 * significance 0.25 (not 0.05) to make up for the low power of a test on about three batches.
 *
 * Formula in words (extra-sum-of-squares F tests on the regression scale):
 * 1. Slopes: F = [(RSS_SICS − RSS_SISS)/(B − 1)] / [RSS_SISS/(N − 2B)] with B batches and N
 *    results. p < 0.25 → 'separate' (each batch its own line; the shelf life is the minimum).
 * 2. Otherwise intercepts, within the common-slope model:
 *    F = [(RSS_CICS − RSS_SICS)/(B − 1)] / [RSS_SICS/(N − B − 1)]. p < 0.25 → 'common-slope'
 *    (separate intercepts; the worst batch decides); else 'pooled' (one line for all data).
 * The second test uses the common-slope model's residual variance (the model it reduces), the
 * usual sequential reading of the procedure (common practice).
 *
 * Reference: ICH Q1E App. B.2 and ICH Q1A(R2) 2.2.9 as quoted in the ASEAN Guideline on
 * Stability Study (2013) §4.10; LeBlond et al., J. Valid. Technol. 17(3) 2011
 * (docs/methods.md#batch-poolability).
 *
 * Throws `KineticsError`: 'not-applicable' for fewer than 2 batches (nothing to pool),
 * 'zero-variance' when the separate-lines model fits exactly (no error variance to test against),
 * 'too-few-points' when N − 2B < 1, 'invalid-input' for a significance outside (0, 1), and the
 * validation errors of `transformedStabilityBatches`.
 *
 * Example: the invented batches of `q1e-test-fixtures.ts`, three lines 100.2 − 0.30·t with about
 * ±0.15 % scatter at 0–24 months, give slope p = 0.86 and intercept p = 0.98: 'pooled'.
 */
export function poolability(
  batches: readonly StabilityBatch[],
  options: { scale?: StabilityTransform; significance?: number } = {},
): PoolabilityResult {
  const scale = options.scale ?? 'none';
  const significance = options.significance ?? Q1E_POOLABILITY_SIGNIFICANCE;
  if (!(significance > 0 && significance < 1)) {
    throw new KineticsError(
      'invalid-input',
      `Significance must lie strictly between 0 and 1; got ${significance}.`,
    );
  }
  if (batches.length < 2) {
    throw new KineticsError(
      'not-applicable',
      `Poolability compares batches; with ${batches.length} batch there is nothing to pool.`,
      { batches: batches.length },
    );
  }
  return poolabilityOfTransformed(transformedStabilityBatches(batches, scale), scale, significance);
}

/** The same test on batches already validated and transformed (used by `q1eShelfLife`). */
export function poolabilityOfTransformed(
  batches: readonly TransformedBatch[],
  scale: StabilityTransform,
  significance: number,
): PoolabilityResult {
  const n = batches.reduce((total, batch) => total + batch.times.length, 0);
  const batchCount = batches.length;
  if (n - 2 * batchCount < 1) {
    throw new KineticsError(
      'too-few-points',
      'The separate-lines model leaves no residual degrees of freedom.',
      {
        n,
        batches: batchCount,
      },
    );
  }
  const slopeTest = nestedTest(batches, 'separate', 'common-slope', significance);
  const format = (p: number): string => p.toPrecision(3);
  if (!slopeTest.equalityAccepted) {
    return {
      significance,
      scale,
      batchCount,
      n,
      slopeTest,
      interceptTest: null,
      interceptTestSkippedReason: 'The slopes differ, so intercepts are not compared.',
      decision: 'separate',
      explanation: `Slopes differ (p = ${format(slopeTest.pValue)} < ${significance}): each batch is evaluated on its own line.`,
    };
  }
  const interceptTest = nestedTest(batches, 'common-slope', 'pooled', significance);
  const decision: AncovaModel = interceptTest.equalityAccepted ? 'pooled' : 'common-slope';
  return {
    significance,
    scale,
    batchCount,
    n,
    slopeTest,
    interceptTest,
    interceptTestSkippedReason: null,
    decision,
    explanation:
      decision === 'pooled'
        ? `Slopes (p = ${format(slopeTest.pValue)}) and intercepts (p = ${format(interceptTest.pValue)}) do not differ at ${significance}: all batches share one line.`
        : `Slopes do not differ (p = ${format(slopeTest.pValue)}) but intercepts do (p = ${format(interceptTest.pValue)} < ${significance}): common slope, separate intercepts.`,
  };
}
