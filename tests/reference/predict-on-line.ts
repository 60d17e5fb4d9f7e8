import { assertFiniteNumbers } from '../../shared/kinetics/numeric/assert-finite-numbers.ts';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';
import { studentTQuantile } from '../../shared/kinetics/numeric/student-t-quantile.ts';
import type { StraightLineFit } from './simple-linear-regression.ts';

/** The fitted line at one x, with a confidence interval for the mean and a prediction interval. */
export interface LinePrediction {
  /** intercept + slope·x. */
  estimate: number;
  /** Interval for the mean response (the line itself) at x. */
  confidenceInterval: [number, number];
  /** Interval for one new observation at x. */
  predictionInterval: [number, number];
  /** Standard error of the estimated mean at x. */
  standardErrorOfMean: number;
  /** The Student t quantile used. */
  tQuantile: number;
}

export interface PredictOnLineOptions {
  /**
   * 'two-sided' (default): each interval has the stated coverage. 'one-sided': each bound on its
   * own is a one-sided limit with the stated confidence (ICH Q1E uses the one-sided 95 % lower
   * limit for an assay that decreases: take the lower end with confidence 0.95).
   */
  sides?: 'two-sided' | 'one-sided';
  /** Weight of the new observation in the prediction interval (default 1: variance s²/1). */
  newObservationWeight?: number;
}

/**
 * Estimate of a fitted straight line at x, with the confidence interval of the mean response and
 * the prediction interval of a new observation.
 *
 * Why: the ICH Q1E shelf life is where the one-sided confidence limit of the mean line meets the
 * specification; a prediction interval tells whether a new result is out of trend.
 *
 * Formulas in words: with s the residual standard deviation, the variance of the mean at x is
 * s²·(1/Σw + (x − x̄)²/Sxx) (through the origin: s²·x²/Σwx²), computed about the centre so no
 * cancellation occurs far from the data; a new observation adds s²/w_new. Each interval is
 * estimate ± t·(standard error) with t the Student quantile at (1 + confidence)/2 (two-sided)
 * or at the confidence (one-sided) with the fit's degrees of freedom.
 *
 * Reference: NIST/SEMATECH e-Handbook of Statistical Methods, §4.5.2.1 and §4.5.2.2 (confidence
 * and prediction intervals), https://www.itl.nist.gov/div898/handbook/pmd/section5/pmd52.htm.
 *
 * Throws `KineticsError('invalid-input')` for a non-finite x, a confidence not strictly between
 * 0 and 1, or a non-positive new-observation weight.
 *
 * Example: for the line through (0, 1), (1, 3), (2, 5), (3, 7.5), at x = 1.5 with confidence
 * 0.95 the estimate is 4.125.
 */
export function predictOnLine(
  fit: StraightLineFit,
  x: number,
  confidence: number,
  options: PredictOnLineOptions = {},
): LinePrediction {
  assertFiniteNumbers([x], 'x');
  if (!(confidence > 0 && confidence < 1)) {
    throw new KineticsError(
      'invalid-input',
      `confidence must lie strictly between 0 and 1; got ${confidence}.`,
      {
        confidence,
      },
    );
  }
  const newObservationWeight = options.newObservationWeight ?? 1;
  if (!(Number.isFinite(newObservationWeight) && newObservationWeight > 0)) {
    throw new KineticsError('invalid-input', 'newObservationWeight must be a finite positive number.', {
      newObservationWeight,
    });
  }
  const residualVariance = fit.residualStandardDeviation ** 2;
  const distance = x - fit.meanX;
  const leverage = fit.throughOrigin
    ? (x * x) / fit.sxx
    : 1 / fit.sumOfWeights + (distance * distance) / fit.sxx;
  const standardErrorOfMean = Math.sqrt(residualVariance * leverage);
  const standardErrorOfNew = Math.sqrt(residualVariance * (leverage + 1 / newObservationWeight));
  const probability = options.sides === 'one-sided' ? confidence : (1 + confidence) / 2;
  const tQuantile = studentTQuantile(probability, fit.degreesOfFreedom);
  // About the centre, so that far from the data no cancellation between intercept and slope·x occurs.
  const estimate = fit.throughOrigin ? fit.slope * x : fit.meanY + fit.slope * distance;
  return {
    estimate,
    confidenceInterval: [
      estimate - tQuantile * standardErrorOfMean,
      estimate + tQuantile * standardErrorOfMean,
    ],
    predictionInterval: [
      estimate - tQuantile * standardErrorOfNew,
      estimate + tQuantile * standardErrorOfNew,
    ],
    standardErrorOfMean,
    tQuantile,
  };
}
