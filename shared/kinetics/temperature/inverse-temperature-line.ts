import { compensatedSum } from '../numeric/compensated-sum.ts';
import { KineticsError } from '../numeric/kinetics-error.ts';
import { linearLeastSquares } from '../numeric/linear-least-squares.ts';

/** A straight line of a response against 1/T, stored in centred form (see `fitInverseTemperatureLine`). */
export interface InverseTemperatureLine {
  /** Number of points fitted. */
  n: number;
  /** Whether relative weights were used. */
  weighted: boolean;
  /** Centre of the inverse temperatures, 1/K. */
  referenceInverseTemperature: number;
  /** Fitted response at the centre. */
  valueAtReference: number;
  /** Slope of the response against 1/T, in kelvin. */
  slope: number;
  valueAtReferenceStandardError: number | null;
  slopeStandardError: number | null;
  covarianceValueSlope: number | null;
  degreesOfFreedom: number;
  residualStandardDeviation: number | null;
  rSquared: number | null;
  /** Smallest and largest fitted 1/T, 1/K. */
  inverseTemperatureRange: [number, number];
  /** Why the standard errors are null (two points), otherwise null. */
  uncertaintyUnavailableReason: string | null;
}

/**
 * Straight line of a response (ln k for Arrhenius, ln(k/T) for Eyring) against the inverse
 * absolute temperature 1/T, fitted with the inverse temperatures centred at their (weighted) mean.
 *
 * Why centred: 1/T values of a stability study lie in a narrow band far from zero
 * (0.0030–0.0034 K⁻¹ for 20–60 °C), so the intercept at 1/T = 0 is a long extrapolation that is
 * almost perfectly correlated with the slope. Centring makes the intercept the response at the
 * middle of the data, uncorrelated with the slope (exactly so for the weighted mean), and every
 * derived quantity (ln A, ΔS‡, a predicted k) is formed from these two well-conditioned numbers
 * and their covariance (NIST/SEMATECH e-Handbook §4.4.4, "centring the predictor").
 *
 * Formula in words: x = 1/T − x_ref with x_ref = Σwᵢ(1/Tᵢ)/Σwᵢ; fit response = a + b·x by
 * (weighted) least squares; a is the response at x_ref, b the slope in kelvin. With exactly two
 * points the line passes through both, the residual degrees of freedom are 0, and no standard
 * error exists: they are `null` and `uncertaintyUnavailableReason` says why.
 *
 * Throws `KineticsError('too-few-points')` for fewer than 2 points, `KineticsError('zero-variance')`
 * when every temperature is the same (the slope is then undetermined) and
 * `KineticsError('invalid-input')` for a non-positive absolute temperature, non-finite numbers,
 * mismatched lengths or non-positive weights.
 *
 * Example: temperatures 300 K and 400 K with responses 0 and 1 give slope
 * 1/(1/400 − 1/300) = −1200 K, degreesOfFreedom 0 and null standard errors.
 */
export function fitInverseTemperatureLine(
  temperaturesK: readonly number[],
  responses: readonly number[],
  weights?: readonly number[],
): InverseTemperatureLine {
  const n = temperaturesK.length;
  if (responses.length !== n || (weights !== undefined && weights.length !== n)) {
    throw new KineticsError(
      'invalid-input',
      'Temperatures, responses and weights must have the same length.',
      {
        temperatures: n,
        responses: responses.length,
        weights: weights?.length,
      },
    );
  }
  if (n < 2) {
    throw new KineticsError('too-few-points', `A temperature dependence needs at least 2 points; got ${n}.`, {
      n,
    });
  }
  temperaturesK.forEach((temperature, index) => {
    if (!Number.isFinite(temperature) || temperature <= 0) {
      throw new KineticsError(
        'invalid-input',
        `Absolute temperature must be above 0 K; got ${temperature}.`,
        {
          index,
        },
      );
    }
  });
  responses.forEach((value, index) => {
    if (!Number.isFinite(value)) {
      throw new KineticsError('invalid-input', `Response ${index} is not a finite number.`, { index });
    }
  });
  weights?.forEach((weight, index) => {
    if (!Number.isFinite(weight) || weight <= 0) {
      throw new KineticsError(
        'invalid-input',
        `Weight ${index} must be finite and positive; got ${weight}.`,
        {
          index,
        },
      );
    }
  });
  const inverse = temperaturesK.map((temperature) => 1 / temperature);
  const minimum = Math.min(...inverse);
  const maximum = Math.max(...inverse);
  if (minimum === maximum) {
    throw new KineticsError(
      'zero-variance',
      'All temperatures are equal, so the temperature dependence is undetermined.',
      {
        temperatureK: temperaturesK[0],
      },
    );
  }
  const w = weights ?? inverse.map(() => 1);
  const reference = compensatedSum(inverse.map((x, i) => (w[i] ?? 1) * x)) / compensatedSum(w);
  const centred = inverse.map((x) => x - reference);
  const range: [number, number] = [minimum, maximum];

  if (n === 2) {
    const [x0, x1] = centred as [number, number];
    const [y0, y1] = responses as [number, number];
    const slope = (y1 - y0) / (x1 - x0);
    return {
      n,
      weighted: weights !== undefined,
      referenceInverseTemperature: reference,
      valueAtReference: y0 - slope * x0,
      slope,
      valueAtReferenceStandardError: null,
      slopeStandardError: null,
      covarianceValueSlope: null,
      degreesOfFreedom: 0,
      residualStandardDeviation: null,
      rSquared: null,
      inverseTemperatureRange: range,
      uncertaintyUnavailableReason:
        'Two points define the line exactly: no residual degrees of freedom, so no standard error, interval or R².',
    };
  }

  const fit = linearLeastSquares(
    centred.map((x) => [1, x]),
    responses,
    weights ? { weights } : {},
  );
  const [valueAtReference, slope] = fit.coefficients as [number, number];
  const [interceptStandardError, slopeStandardError] = fit.standardErrors as [number, number];
  return {
    n,
    weighted: weights !== undefined,
    referenceInverseTemperature: reference,
    valueAtReference,
    slope,
    valueAtReferenceStandardError: interceptStandardError,
    slopeStandardError,
    covarianceValueSlope: fit.covariance[0]?.[1] ?? 0,
    degreesOfFreedom: fit.degreesOfFreedom,
    residualStandardDeviation: fit.residualStandardDeviation,
    rSquared: fit.rSquared,
    inverseTemperatureRange: range,
    uncertaintyUnavailableReason: null,
  };
}

/**
 * The fitted response at an inverse temperature and its standard error (of the mean line):
 * a + b·d with variance Var(a) + d²·Var(b) + 2d·Cov(a, b), d = 1/T − x_ref.
 * The standard error is null when the line has no residual degrees of freedom.
 *
 * Example: for the two-point line of the example above, `lineValueAt(line, 1/350)` is
 * 0 + (−1200)·(1/350 − 1/300) = 0.5714… with standardError null.
 */
export function lineValueAt(
  line: InverseTemperatureLine,
  inverseTemperature: number,
): { estimate: number; standardError: number | null } {
  const distance = inverseTemperature - line.referenceInverseTemperature;
  const estimate = line.valueAtReference + line.slope * distance;
  const a = line.valueAtReferenceStandardError;
  const b = line.slopeStandardError;
  const covariance = line.covarianceValueSlope;
  if (a === null || b === null || covariance === null) {
    return { estimate, standardError: null };
  }
  const variance = a * a + distance * distance * b * b + 2 * distance * covariance;
  return { estimate, standardError: Math.sqrt(Math.max(0, variance)) };
}
