import { compensatedMean } from '../numeric/compensated-sum.ts';
import type { LinearFit } from '../numeric/linear-least-squares.ts';
import { linearLeastSquares } from '../numeric/linear-least-squares.ts';
import type { AncovaDesign } from './ancova-design.ts';
import type { TransformedBatch } from './stability-batch.ts';

/**
 * A fitted regression line on the regression scale, stored in centred form with the covariance
 * of its two coefficients, which is all the ICH Q1E confidence limit of the mean line needs.
 */
export interface StabilityLine {
  /** Batch identifier, or 'pooled' for the line all batches share. */
  label: string;
  /** Batches this line describes. */
  batches: string[];
  centreTime: number;
  /** Fitted mean at `centreTime`. */
  valueAtCentre: number;
  /** Change per time unit on the regression scale. */
  slope: number;
  varianceAtCentre: number;
  covarianceCentreSlope: number;
  varianceSlope: number;
  /** Residual degrees of freedom of the fit the line comes from. */
  degreesOfFreedom: number;
  residualStandardDeviation: number;
}

/**
 * Mean of the line at time t and its standard error:
 * m(t) = a + b·(t − c), se(t) = √(Var a + 2(t − c)·Cov(a, b) + (t − c)²·Var b).
 *
 * Example: a line with a = 98, b = −0.5, c = 6, Var a = 0.01, Cov = 0, Var b = 0.0004 has at
 * t = 16 the mean 93 and the standard error √(0.01 + 100·0.0004) = 0.2236.
 */
export function lineMeanAt(line: StabilityLine, time: number): { mean: number; standardError: number } {
  const distance = time - line.centreTime;
  const variance =
    line.varianceAtCentre + 2 * distance * line.covarianceCentreSlope + distance ** 2 * line.varianceSlope;
  return {
    mean: line.valueAtCentre + line.slope * distance,
    standardError: Math.sqrt(Math.max(0, variance)),
  };
}

/** The line of one batch (or of all, for 'pooled') read from a fitted ANCOVA model. */
export function lineFromAncova(
  fit: LinearFit,
  design: AncovaDesign,
  index: number,
  label: string,
): StabilityLine {
  const columns = design.columns[index] ?? design.columns[0]!;
  const { intercept, slope } = columns;
  return {
    label,
    batches: label === 'pooled' ? design.columns.map((column) => column.batch) : [columns.batch],
    centreTime: design.centreTime,
    valueAtCentre: fit.coefficients[intercept] ?? 0,
    slope: fit.coefficients[slope] ?? 0,
    varianceAtCentre: fit.covariance[intercept]?.[intercept] ?? 0,
    covarianceCentreSlope: fit.covariance[intercept]?.[slope] ?? 0,
    varianceSlope: fit.covariance[slope]?.[slope] ?? 0,
    degreesOfFreedom: fit.degreesOfFreedom,
    residualStandardDeviation: fit.residualStandardDeviation,
  };
}

/**
 * The ordinary least-squares line of one batch on its own, with time centred at the batch's mean
 * time; its residual variance comes from that batch alone.
 *
 * Example: times [0, 3, 6], responses [100, 99, 98.2] give slope −0.3 per time unit.
 */
export function lineOfSingleBatch(batch: TransformedBatch): StabilityLine {
  const centreTime = compensatedMean(batch.times);
  const fit = linearLeastSquares(
    batch.times.map((time) => [1, time - centreTime]),
    batch.responses,
  );
  return {
    label: batch.batch,
    batches: [batch.batch],
    centreTime,
    valueAtCentre: fit.coefficients[0] ?? 0,
    slope: fit.coefficients[1] ?? 0,
    varianceAtCentre: fit.covariance[0]?.[0] ?? 0,
    covarianceCentreSlope: fit.covariance[0]?.[1] ?? 0,
    varianceSlope: fit.covariance[1]?.[1] ?? 0,
    degreesOfFreedom: fit.degreesOfFreedom,
    residualStandardDeviation: fit.residualStandardDeviation,
  };
}
