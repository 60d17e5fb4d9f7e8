import type { DerivedFigure, ModelSummary } from './derived/model-summary.ts';
import { isUnitScaling, type SeriesScaling } from './magnitude-scaling.ts';

export {
  COMFORTABLE_RANGE,
  isUnitScaling,
  type SeriesScaling,
  seriesScaling,
} from './magnitude-scaling.ts';

import type { PredictedValue } from './derived/predicted-value.ts';
import type { ModelAveragedFigure } from './model-averaging.ts';
import type { RateLawFit, RateLawModel } from './order/fit-rate-law.ts';
import type { LinearisedFit } from './order/linearised-fits.ts';
import type { ResidualDiagnostics } from './order/residual-diagnostics.ts';
import type { PlausibleLawFigures, SeriesAnalysis, SeriesOptions } from './series-analysis.ts';

/**
 * Internal scaling of one series, so that values from 1e-300 to 1e300 and times up to 1e300 give
 * the same relative results as the same data near unit scale. Without it squares of values or
 * times overflow (1e155² = ∞), products of small numbers underflow (the variance of C0 at 1e-300
 * is 0) and the fits or their intervals are lost, silently or with a crash.
 *
 * What it does: when the largest |value| or the largest time lies outside
 * [`COMFORTABLE_RANGE[0]`, `COMFORTABLE_RANGE[1]`], times are divided by s_t and values by s_C,
 * each the power of two at or below the largest magnitude, before anything is fitted; the
 * results are mapped back to the original units. Dividing by a power of two is exact in binary
 * floating point (only the exponent changes), so the scaled data are the original data, and
 * mapping back is exact unless the result itself lies outside the double range. Data inside the
 * range are not touched, so ordinary results do not change by a single bit.
 *
 * Mapping back, for the integrated rate law −dC/dt = k·Cⁿ with C = s_C·c and t = s_t·τ:
 * k = κ·s_C^(1−n)/s_t, C0 = s_C·c0, every time (half-life, t90, time to a limit, time span) ×s_t,
 * every value (fitted, predicted, residual on the value scale, curve separation) ×s_C, the
 * residual sum of squares ×s_C² on the value scale (unchanged on the ln scale), and the Gaussian
 * log-likelihood of the values minus N·ln s_C (the density of C is that of c divided by s_C), so
 * AICc gains 2N·ln s_C and every AICc difference and Akaike weight is unchanged. The free order's
 * k also depends on n: its standard error is carried over by the delta method with the fit's
 * covariance of (k, n), ∂k/∂κ = s_C^(1−n)/s_t and ∂k/∂n = −k·ln s_C (Bates & Watts 1988,
 * "Nonlinear regression analysis and its applications", §2.3: a reparametrisation carries the
 * linearised covariance over by its Jacobian). Straight-line plots: C against t (slope ×s_C/s_t,
 * intercept ×s_C), ln C (slope /s_t, intercept + ln s_C), 1/C (slope /(s_C·s_t), intercept /s_C).
 *
 * A rate constant whose original value lies outside the double range (e.g. second order with
 * values near 1e300 and times near 1e300: k ≈ 1e-600) cannot be reported: that law is marked not
 * applicable with the reason.
 *
 * Throws nothing. Example: values 1e200·(100, 95.1, 90.5), times 0, 1, 2 months give s_C = 2^671
 * (the power of two at or below 1.0e202) and s_t = 1 (the times are ordinary); first-order k is
 * the same as for (100, 95.1, 90.5) to rounding.
 */

/** The options in scaled units: limits /s_C, prediction times /s_t. */
export function scaledOptions(options: SeriesOptions, scaling: SeriesScaling): SeriesOptions {
  if (isUnitScaling(scaling)) return options;
  const scaled: SeriesOptions = { ...options };
  if (options.lowerLimit !== undefined) scaled.lowerLimit = options.lowerLimit / scaling.value;
  if (options.upperLimit !== undefined) scaled.upperLimit = options.upperLimit / scaling.value;
  if (options.predictAt !== undefined) scaled.predictAt = options.predictAt.map((t) => t / scaling.time);
  return scaled;
}

/** The smallest double with full precision, 2^-1022. */
const SMALLEST_NORMAL = 2 ** -1022;

type Pair = [number, number] | null;
const times = (pair: Pair, factor: number): Pair =>
  pair === null ? null : [pair[0] * factor, pair[1] * factor];
const by = (value: number | null, factor: number) => (value === null ? null : value * factor);

function derived(figure: DerivedFigure | null | undefined, s: number): DerivedFigure | null {
  if (figure === null || figure === undefined) return null;
  return { ...figure, estimate: by(figure.estimate, s), ci95: times(figure.ci95, s) };
}

function timeToLimit<T extends { lower?: unknown; upper?: unknown }>(
  limits: T | undefined,
  map: (entry: NonNullable<T['lower']>) => NonNullable<T['lower']>,
): T | undefined {
  if (limits === undefined) return undefined;
  const result = { ...limits };
  for (const side of ['lower', 'upper'] as const) {
    const entry = limits[side];
    if (entry !== undefined) result[side] = (entry === null ? null : map(entry as never)) as T[typeof side];
  }
  return result;
}

/** Factor of k and its standard error for order n (free order: the estimate's factor only). */
const rateFactor = (n: number, scaling: SeriesScaling) => scaling.value ** (1 - n) / scaling.time;

/**
 * k, its standard error and interval in original units. For the free order the covariance of
 * (κ, n) of the scaled fit carries the standard error over (delta method, see the header).
 */
function rateConstant(
  model: RateLawModel,
  k: number | null,
  standardError: number | null,
  interval: Pair,
  fit: RateLawFit | null,
  scaling: SeriesScaling,
): { k: number | null; standardError: number | null; interval: Pair; outOfRange: boolean } {
  if (k === null) return { k, standardError, interval, outOfRange: false };
  const n = model === 'n' ? (fit?.n ?? Number.NaN) : model;
  const factor = rateFactor(n, scaling);
  const original = k * factor;
  // Beyond the largest double, or so small that it is subnormal and has lost digits.
  const outOfRange = !Number.isFinite(original) || (k !== 0 && Math.abs(original) < SMALLEST_NORMAL);
  if (model !== 'n' || standardError === null) {
    return {
      k: original,
      standardError: by(standardError, factor),
      interval: times(interval, factor),
      outOfRange,
    };
  }
  const covariance = fit?.covariance ?? null;
  if (covariance === null || fit === null)
    return { k: original, standardError: null, interval: null, outOfRange };
  const p = fit.parameterCount;
  const dk = factor;
  const dn = -original * Math.log(scaling.value);
  const variance =
    dk * dk * covariance[1 * p + 1]! +
    2 * dk * dn * covariance[1 * p + 2]! +
    dn * dn * covariance[2 * p + 2]!;
  const se = Math.sqrt(Math.max(0, variance));
  const quantile = interval === null || standardError === 0 ? null : (interval[1] - k) / standardError;
  return {
    k: original,
    standardError: se,
    interval: quantile === null ? null : [original - quantile * se, original + quantile * se],
    outOfRange,
  };
}

const OUT_OF_RANGE =
  'its rate constant in these units lies outside the range of double precision (about 1e±308); express the values or times in other units';

function modelInOriginalUnits(
  summary: ModelSummary,
  fit: RateLawFit | null,
  scaling: SeriesScaling,
  logShift: number,
  logScale: boolean,
): ModelSummary {
  const rate = rateConstant(summary.order, summary.k, summary.kStandardError, summary.kCi95, fit, scaling);
  const s = scaling.value;
  const mapped: ModelSummary = {
    ...summary,
    k: rate.k,
    kStandardError: rate.standardError,
    kCi95: rate.interval,
    c0: by(summary.c0, s),
    c0StandardError: by(summary.c0StandardError, s),
    c0Ci95: times(summary.c0Ci95, s),
    aicc: summary.aicc === null ? null : summary.aicc + 2 * logShift,
    rss: logScale ? summary.rss : by(summary.rss, s * s),
    residualStandardDeviation: logScale
      ? summary.residualStandardDeviation
      : by(summary.residualStandardDeviation, s),
    halfLife: derived(summary.halfLife, scaling.time),
    t90: derived(summary.t90, scaling.time),
  };
  if (rate.outOfRange) {
    Object.assign(mapped, {
      k: null,
      kStandardError: null,
      kCi95: null,
      applicable: false,
      reason: OUT_OF_RANGE,
    });
  }
  return mapped;
}

function linearisedInOriginalUnits(fit: LinearisedFit, scaling: SeriesScaling): LinearisedFit {
  const { time: st, value: sc } = scaling;
  const [slopeFactor, intercept] =
    fit.transform === 'value'
      ? [sc / st, (value: number) => value * sc]
      : fit.transform === 'ln(value)'
        ? [1 / st, (value: number) => value + Math.log(sc)]
        : [1 / (sc * st), (value: number) => value / sc];
  const interceptSeFactor = fit.transform === 'value' ? sc : fit.transform === 'ln(value)' ? 1 : 1 / sc;
  return {
    ...fit,
    slope: by(fit.slope, slopeFactor),
    intercept: fit.intercept === null ? null : intercept(fit.intercept),
    slopeStandardError: by(fit.slopeStandardError, slopeFactor),
    interceptStandardError: by(fit.interceptStandardError, interceptSeFactor),
    k: by(fit.k, rateFactor(fit.order, scaling)),
    c0: by(fit.c0, sc),
  };
}

function averaged(figure: ModelAveragedFigure, s: number): ModelAveragedFigure {
  return {
    ...figure,
    estimate: by(figure.estimate, s),
    interval: times(figure.interval, s),
    range: times(figure.range, s),
    // On the ln scale a factor only shifts ln θ, so the standard error there is unchanged.
    unconditionalStandardError:
      figure.scale === 'log' ? figure.unconditionalStandardError : by(figure.unconditionalStandardError, s),
  };
}

function plausibleInOriginalUnits(
  plausible: PlausibleLawFigures,
  fits: readonly (RateLawFit | null)[],
  scaling: SeriesScaling,
): PlausibleLawFigures {
  const st = scaling.time;
  const fitOf = (model: RateLawModel) => fits[model === 'n' ? 3 : model] ?? null;
  const laws = plausible.laws.map((law) => {
    // The free order's interval needs the fit's standard error and covariance of (κ, n).
    const fit = fitOf(law.model);
    const rate = rateConstant(law.model, law.k, fit?.standardErrors?.[1] ?? null, law.kCi95, fit, scaling);
    return {
      ...law,
      k: rate.outOfRange ? null : rate.k,
      kCi95: rate.outOfRange ? null : rate.interval,
      halfLife: derived(law.halfLife, st),
      t90: derived(law.t90, st),
      ...(law.timeToLimit === undefined
        ? {}
        : { timeToLimit: timeToLimit(law.timeToLimit, (f) => derived(f, st)!) }),
    };
  });
  const range = {
    ...plausible.range,
    halfLife: times(plausible.range.halfLife, st),
    t90: times(plausible.range.t90, st),
  };
  if (plausible.range.timeToLimit !== undefined)
    range.timeToLimit = timeToLimit(plausible.range.timeToLimit, (pair) => times(pair, st)!);
  const modelAveraged: PlausibleLawFigures['modelAveraged'] = {
    t90: averaged(plausible.modelAveraged.t90, st),
  };
  if (plausible.modelAveraged.timeToLimit !== undefined)
    modelAveraged.timeToLimit = timeToLimit(plausible.modelAveraged.timeToLimit, (f) => averaged(f, st));
  if (plausible.modelAveraged.predictions !== undefined)
    modelAveraged.predictions = plausible.modelAveraged.predictions.map((p) => ({
      ...averaged(p, scaling.value),
      time: p.time * st,
    }));
  return { laws, range, modelAveraged };
}

function diagnosticsInOriginalUnits(
  diagnostics: ResidualDiagnostics | null,
  scaling: SeriesScaling,
): ResidualDiagnostics | null {
  if (diagnostics === null) return null;
  const s = scaling.value;
  const residualFactor = diagnostics.residualScale === 'value' ? s : 1;
  return {
    ...diagnostics,
    points: diagnostics.points.map((point) => ({
      ...point,
      time: point.time * scaling.time,
      value: point.value * s,
      fitted: by(point.fitted, s),
      residual: by(point.residual, residualFactor),
    })),
  };
}

const prediction = (p: PredictedValue, scaling: SeriesScaling): PredictedValue => ({
  ...p,
  time: p.time * scaling.time,
  estimate: by(p.estimate, scaling.value),
  confidenceInterval: times(p.confidenceInterval, scaling.value),
  predictionInterval: times(p.predictionInterval, scaling.value),
});

/** Predicted values of the scaled series in the original units (unchanged under unit scaling). */
export function predictionsInOriginalUnits(
  predictions: PredictedValue[],
  scaling: SeriesScaling,
): PredictedValue[] {
  if (isUnitScaling(scaling)) return predictions;
  return predictions.map((p) => prediction(p, scaling));
}

/**
 * The analysis of the scaled series in the original units (see the header). `fits` are the
 * scaled fits (for the free order's covariance); warnings are left to the caller, which
 * collects them from the result in original units.
 */
export function analysisInOriginalUnits(
  analysis: SeriesAnalysis,
  fits: readonly (RateLawFit | null)[],
  scaling: SeriesScaling,
): SeriesAnalysis {
  if (isUnitScaling(scaling)) return analysis;
  const st = scaling.time;
  const sc = scaling.value;
  const logScale = analysis.errorModel === 'proportional';
  const logShift = analysis.n * Math.log(sc);
  const choice = analysis.errorModelChoice;
  const selection = analysis.selection;
  const result: SeriesAnalysis = {
    ...analysis,
    timeSpan: [analysis.timeSpan[0] * st, analysis.timeSpan[1] * st],
    errorModelChoice: {
      ...choice,
      logLikelihoodConstant:
        choice.logLikelihoodConstant === null ? null : choice.logLikelihoodConstant - logShift,
      logLikelihoodProportional:
        choice.logLikelihoodProportional === null ? null : choice.logLikelihoodProportional - logShift,
    },
    models: analysis.models.map((model) =>
      modelInOriginalUnits(
        model,
        fits[model.order === 'n' ? 3 : model.order] ?? null,
        scaling,
        logShift,
        logScale,
      ),
    ),
    linearized: analysis.linearized.map((fit) => linearisedInOriginalUnits(fit, scaling)),
    selection: {
      ...selection,
      aicc: selection.aicc.map((value) => (value === null ? null : value + 2 * logShift)),
      curveSeparation: by(selection.curveSeparation, sc),
      residualStandardDeviation: logScale
        ? selection.residualStandardDeviation
        : by(selection.residualStandardDeviation, sc),
    },
    halfLife: derived(analysis.halfLife, st),
    t90: derived(analysis.t90, st),
    diagnostics: diagnosticsInOriginalUnits(analysis.diagnostics, scaling),
  };
  if (analysis.timeToLimit !== undefined)
    result.timeToLimit = timeToLimit(analysis.timeToLimit, (f) => derived(f, st)!);
  if (analysis.predictions !== undefined)
    result.predictions = analysis.predictions.map((p) => prediction(p, scaling));
  if (analysis.plausible !== undefined)
    result.plausible = plausibleInOriginalUnits(analysis.plausible, fits, scaling);
  return result;
}
