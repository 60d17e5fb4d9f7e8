import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import type { RateLawFit, RateLawModel } from '../order/fit-rate-law.ts';
import { rateConstantUnit } from '../units.ts';
import { type Level, timeToLevel } from './time-to-level.ts';

/**
 * One rate law's result as the analysis reports it: k and C0 (and n) with intervals, the unit of k,
 * AICc and Akaike weight, and the half-life and t90 the law implies.
 *
 * Formula in words: parameter intervals are estimate ± t·SE with Student t on the fit's residual degrees of
 * freedom (Bates & Watts 1988 §2.3; docs/methods.md#parameter-intervals); k's unit is
 * valueUnit^(1−n)/timeUnit (OpenStax Chemistry 2e §12.4; docs/methods.md#conventions); half-life and
 * t90 as in `time-to-level.ts`. A time beyond the last measurement is flagged `beyondObservedTime`.
 *
 * Throws nothing for a fitted law; `KineticsError('invalid-input')` for a confidence level outside (0, 1).
 *
 * Example: a first-order fit k = 6.213e-4 (SE 2.57e-6, 7 df) in s gives kUnit '1/s' and kCi95
 * [6.152e-4, 6.274e-4] (N2O5 data of Eyring & Daniels 1930; docs/methods.md#worked-examples).
 */

export interface DerivedFigure {
  estimate: number | null;
  /** Interval at the analysis confidence level (95 % by default); null when not estimable. */
  ci95: [number, number] | null;
  unit: string;
  method: 'fieller' | 'delta-log' | 'none';
  beyondObservedTime: boolean;
  reason?: string;
}

export interface ModelSummary {
  order: RateLawModel;
  k: number | null;
  kStandardError: number | null;
  kCi95: [number, number] | null;
  kUnit: string;
  c0: number | null;
  c0StandardError: number | null;
  c0Ci95: [number, number] | null;
  n?: number | null;
  nCi95?: [number, number] | null;
  aicc: number | null;
  weight: number | null;
  rss: number | null;
  residualStandardDeviation: number | null;
  degreesOfFreedom: number | null;
  iterations: number | null;
  converged: boolean;
  applicable: boolean;
  reason?: string;
  halfLife: DerivedFigure | null;
  t90: DerivedFigure | null;
}

export function derivedFigure(
  fit: RateLawFit,
  level: Level,
  confidenceLevel: number,
  timeUnit: string,
  lastTime: number,
): DerivedFigure {
  const result = timeToLevel(fit, level, confidenceLevel);
  const figure: DerivedFigure = {
    estimate: result.estimate,
    ci95: result.ci,
    unit: timeUnit,
    method: result.method,
    beyondObservedTime: result.estimate !== null && result.estimate > lastTime,
  };
  if (result.reason !== undefined) figure.reason = result.reason;
  return figure;
}

export function modelSummary(
  model: RateLawModel,
  fit: RateLawFit | null,
  failure: string | undefined,
  criterion: number | null,
  weight: number | null,
  units: { valueUnit: string; timeUnit: string },
  confidenceLevel: number,
  lastTime: number,
): ModelSummary {
  const kUnit = unitOfK(model, fit?.n ?? 1, units.valueUnit, units.timeUnit);
  if (fit === null) {
    return {
      order: model,
      ...(model === 'n' ? { n: null, nCi95: null } : {}),
      k: null,
      kStandardError: null,
      kCi95: null,
      kUnit,
      c0: null,
      c0StandardError: null,
      c0Ci95: null,
      aicc: null,
      weight: null,
      rss: null,
      residualStandardDeviation: null,
      degreesOfFreedom: null,
      iterations: null,
      converged: false,
      applicable: false,
      reason: failure ?? 'not fitted',
      halfLife: null,
      t90: null,
    };
  }
  const q = studentTQuantile(1 - (1 - confidenceLevel) / 2, fit.degreesOfFreedom);
  const se = fit.standardErrors;
  const interval = (estimate: number, index: number): [number, number] | null =>
    se === null ? null : [estimate - q * se[index]!, estimate + q * se[index]!];
  const summary: ModelSummary = {
    order: model,
    k: fit.rateConstant,
    kStandardError: se?.[1] ?? null,
    kCi95: interval(fit.rateConstant, 1),
    kUnit,
    c0: fit.initialValue,
    c0StandardError: se?.[0] ?? null,
    c0Ci95: interval(fit.initialValue, 0),
    aicc: criterion,
    weight,
    rss: fit.residualSumOfSquares,
    residualStandardDeviation: fit.residualStandardDeviation,
    degreesOfFreedom: fit.degreesOfFreedom,
    iterations: fit.iterations,
    converged: fit.converged,
    applicable: true,
    halfLife: derivedFigure(fit, { fractionRemaining: 0.5 }, confidenceLevel, units.timeUnit, lastTime),
    t90: derivedFigure(fit, { fractionRemaining: 0.9 }, confidenceLevel, units.timeUnit, lastTime),
  };
  if (model === 'n') {
    summary.n = fit.n;
    summary.nCi95 = interval(fit.n, 2);
  }
  if (!fit.converged || fit.atSearchLimit) summary.reason = fit.reason;
  return summary;
}

/** valueUnit^(1−n)/timeUnit; for the free order the exponent is written to 3 decimals. */
export function unitOfK(model: RateLawModel, n: number, valueUnit: string, timeUnit: string): string {
  if (model !== 'n') return rateConstantUnit(model, valueUnit, timeUnit);
  const perTime = rateConstantUnit(1, valueUnit, timeUnit);
  const zeroOrder = rateConstantUnit(0, valueUnit, timeUnit);
  const groupedValue = zeroOrder.slice(0, zeroOrder.length - (perTime.length - 1));
  const exponent = Number((1 - n).toFixed(3));
  return `${groupedValue}^(${exponent})/${perTime.slice(2)}`;
}
