import { KineticsError } from '../numeric/kinetics-error.ts';
import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import type { IntegerOrder } from '../types.ts';
import { celsiusToKelvin, convertTime, type TimeUnit } from '../units.ts';
import type { ArrheniusFit } from './arrhenius-fit.ts';

/** One stretch of a temperature log: a temperature held for a duration (in the log's unit). */
export interface HeldTemperature {
  temperatureC: number;
  duration: number;
}

export interface ExcursionImpactInput {
  fit: ArrheniusFit;
  /** The order whose rate constants the Arrhenius fit holds; null when none was named. */
  order: IntegerOrder | null;
  /** The study's labelled storage temperature, °C. */
  storageTemperatureC: number;
  /** Time unit of the rate constants (the study's), and of the log's durations. */
  rateTimeUnit: TimeUnit;
  logTimeUnit: TimeUnit;
  held: readonly HeldTemperature[];
  /** Whether the attribute falls (assay) or rises (a degradation product) on storage. */
  direction: 'decreasing' | 'increasing' | 'either';
  /** The batch's latest result and the acceptance limit on the side it moves towards, if known. */
  latestValue?: number;
  limit?: number;
}

export interface Estimate {
  estimate: number;
  /** Two-sided interval at the fit's confidence level; null when the fit has no standard errors. */
  interval: [number, number] | null;
}

export interface ExcursionImpact {
  storageTemperatureC: number;
  confidence: number;
  /** Time the log's readings cover, in the log's time unit. */
  loggedDuration: number;
  /** Storage time at the labelled temperature that causes the same change, in the log's unit. */
  equivalentDuration: Estimate;
  /** Equivalent minus logged: the extra storage time the log cost, in the log's unit (may be < 0). */
  extraDuration: Estimate;
  /** ∫k dt over the log, in the rate constants' units × the study's time unit. */
  integratedRate: Estimate;
  order: IntegerOrder | null;
  /** Predicted change of the attribute over the log, in the attribute's unit; null when unknown. */
  predictedChange: Estimate | null;
  /** For first order without a latest result: the change as a percentage of the value at the start. */
  predictedChangePercent: Estimate | null;
  /** The margin to the limit before and after the log; null without a latest result and limit. */
  margin: { before: number; after: Estimate } | null;
  /** Log temperatures outside the fitted Arrhenius range (the line is then an assumption). */
  extrapolation: { belowC: number | null; aboveC: number | null };
  /** Why something could not be given, e.g. second order without a latest result. */
  notes: string[];
}

/** Σ wᵢ·exp(b·(xᵢ − x₀)) and its derivative in b divided by itself, with the largest term taken out. */
function weightedExponentials(
  weights: readonly number[],
  inverse: readonly number[],
  slope: number,
  centre: number,
): { logSum: number; slopeGradient: number } {
  const exponents = inverse.map((x) => slope * (x - centre));
  let largest = Number.NEGATIVE_INFINITY;
  for (const exponent of exponents) if (exponent > largest) largest = exponent;
  let sum = 0;
  let first = 0;
  for (let i = 0; i < weights.length; i += 1) {
    const term = (weights[i] as number) * Math.exp((exponents[i] as number) - largest);
    sum += term;
    first += term * ((inverse[i] as number) - centre);
  }
  return { logSum: largest + Math.log(sum), slopeGradient: first / sum };
}

/**
 * What a temperature log did to a product whose Arrhenius fit is known: the storage time at the
 * labelled temperature that causes the same change (the equivalent time), the predicted change of
 * the attribute over the log, and the margin to the acceptance limit left after it.
 *
 * Why: QA must decide whether an excursion matters; MKT says how warm the log was, this says what
 * the warmth cost in the product's own kinetics, with its uncertainty.
 *
 * Formula: with the fitted line ln k = a + b·(1/T − x_ref) (`ArrheniusFit.line`) and wᵢ the time
 * each reading stands for (converted to the rate constants' time unit),
 *   K = ∫k dt = Σ wᵢ·exp(a + b·(1/Tᵢ − x_ref)),
 *   t_eq = K / k(T_s) = Σ wᵢ·exp(b·(1/Tᵢ − 1/T_s)).
 * ln t_eq depends on b alone; its standard error by the delta method is |g|·se(b) with
 * g = Σ wᵢkᵢ(1/Tᵢ − 1/T_s) / Σ wᵢkᵢ; for ln K, var = var a + h²·var b + 2h·cov(a, b) with
 * h = Σ wᵢkᵢ(1/Tᵢ − x_ref) / Σ wᵢkᵢ. Intervals are the estimate × exp(±t·se), t at
 * (1 + confidence)/2 with the fit's degrees of freedom (as `predictRateConstant`). The change of
 * the attribute follows the integrated rate law of the fit's order: zero order ΔC = K; first order
 * C = C₀·e^(−K); second order 1/C = 1/C₀ + K (both need C₀, the latest result; first order
 * without it gives the change as a percentage). A rising attribute is predicted for zero order only.
 * Reference: Arrhenius form as in ICH Q1A(R2) §2.2.7 on excursions and USP <1079.2>; delta
 * method, e.g. Casella & Berger, Statistical Inference, 2nd ed., §5.5.4 (from memory).
 *
 * Throws `KineticsError('invalid-input')` for no readings, non-positive durations or a storage
 * temperature at or below absolute zero.
 *
 * Example: a log held 48 h at 25 °C with storage at 25 °C gives an equivalent time of 48 h and an
 * extra time of 0, whatever the fit.
 */
export function excursionImpact(input: ExcursionImpactInput): ExcursionImpact {
  if (input.held.length === 0) throw new KineticsError('invalid-input', 'The log holds no readings.');
  if (input.held.some((piece) => !(piece.duration >= 0) || !Number.isFinite(piece.temperatureC))) {
    throw new KineticsError(
      'invalid-input',
      'Every reading needs a temperature and a non-negative duration.',
    );
  }
  const { fit } = input;
  const line = fit.line;
  const storageInverse = 1 / celsiusToKelvin(input.storageTemperatureC);
  const inverse = input.held.map((piece) => 1 / celsiusToKelvin(piece.temperatureC));
  const weights = input.held.map((piece) =>
    convertTime(piece.duration, input.logTimeUnit, input.rateTimeUnit),
  );
  const loggedDuration = input.held.reduce((sum, piece) => sum + piece.duration, 0);
  const t =
    line.slopeStandardError === null
      ? null
      : studentTQuantile((1 + fit.confidence) / 2, fit.degreesOfFreedom);
  const spread = (value: number, se: number | null): Estimate => ({
    estimate: value,
    interval: t === null || se === null ? null : [value * Math.exp(-t * se), value * Math.exp(t * se)],
  });

  const equivalent = weightedExponentials(weights, inverse, line.slope, storageInverse);
  const equivalentInRateUnit = Math.exp(equivalent.logSum);
  const toLogUnit = (value: number) => convertTime(value, input.rateTimeUnit, input.logTimeUnit);
  const equivalentSe =
    line.slopeStandardError === null ? null : Math.abs(equivalent.slopeGradient) * line.slopeStandardError;
  const equivalentEstimate = spread(toLogUnit(equivalentInRateUnit), equivalentSe);

  const integrated = weightedExponentials(weights, inverse, line.slope, line.referenceInverseTemperature);
  const integratedRate = Math.exp(line.valueAtReference + integrated.logSum);
  const h = integrated.slopeGradient;
  const a = line.valueAtReferenceStandardError;
  const b = line.slopeStandardError;
  const covariance = line.covarianceValueSlope;
  const integratedSe =
    a === null || b === null || covariance === null
      ? null
      : Math.sqrt(Math.max(0, a * a + h * h * b * b + 2 * h * covariance));
  const integratedEstimate = spread(integratedRate, integratedSe);

  const rising = input.direction === 'increasing';
  const notes: string[] = [];
  const changeOf = (K: number): number | null => {
    const c0 = input.latestValue;
    if (input.order === 0) return K;
    if (rising || c0 === undefined) return null;
    if (input.order === 1) return c0 * (1 - Math.exp(-K));
    if (input.order === 2) return c0 - c0 / (1 + K * c0);
    return null;
  };
  const mapped = (f: (K: number) => number | null): Estimate | null => {
    const estimate = f(integratedEstimate.estimate);
    if (estimate === null) return null;
    const ends = integratedEstimate.interval?.map((K) => f(K) as number) as [number, number] | undefined;
    return { estimate, interval: ends ? [Math.min(...ends), Math.max(...ends)] : null };
  };
  const predictedChange = mapped(changeOf);
  const predictedChangePercent =
    input.order === 1 && input.latestValue === undefined && !rising
      ? mapped((K) => 100 * (1 - Math.exp(-K)))
      : null;
  if (input.order === null)
    notes.push(
      'The fit names no reaction order, so the change of the attribute is not predicted; the equivalent time holds for the fitted rate constants.',
    );
  if (rising && input.order !== null && input.order !== 0)
    notes.push(
      'For a rising attribute only a zero-order (linear) growth is predicted; the equivalent time still holds.',
    );
  if (input.order === 2 && input.latestValue === undefined && !rising)
    notes.push(
      'Second order: the change depends on the current value; give the latest result to predict it.',
    );
  if (input.order === 1 && input.latestValue === undefined && !rising)
    notes.push(
      'First order: the change is given as a percentage of the value at the start of the log; give the latest result to have it in the attribute’s unit.',
    );

  let margin: ExcursionImpact['margin'] = null;
  if (input.latestValue !== undefined && input.limit !== undefined && predictedChange !== null) {
    const before = rising ? input.limit - input.latestValue : input.latestValue - input.limit;
    const after = (change: number) => before - change;
    margin = {
      before,
      after: {
        estimate: after(predictedChange.estimate),
        interval: predictedChange.interval
          ? [after(predictedChange.interval[1]), after(predictedChange.interval[0])]
          : null,
      },
    };
  }

  const [lowC, highC] = fit.temperatureRangeC;
  let coldest = Number.POSITIVE_INFINITY;
  let warmest = Number.NEGATIVE_INFINITY;
  for (const piece of input.held) {
    coldest = Math.min(coldest, piece.temperatureC);
    warmest = Math.max(warmest, piece.temperatureC);
  }
  return {
    storageTemperatureC: input.storageTemperatureC,
    confidence: fit.confidence,
    loggedDuration,
    equivalentDuration: equivalentEstimate,
    extraDuration: {
      estimate: equivalentEstimate.estimate - loggedDuration,
      interval: equivalentEstimate.interval
        ? [equivalentEstimate.interval[0] - loggedDuration, equivalentEstimate.interval[1] - loggedDuration]
        : null,
    },
    integratedRate: integratedEstimate,
    order: input.order,
    predictedChange,
    predictedChangePercent,
    margin,
    extrapolation: { belowC: coldest < lowC ? coldest : null, aboveC: warmest > highC ? warmest : null },
    notes,
  };
}
