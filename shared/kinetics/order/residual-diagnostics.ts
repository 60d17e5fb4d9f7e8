import { invertSmallSymmetric } from '../numeric/small-cholesky.ts';
import { bonferroniOutlierCriticalValue } from './bonferroni-outlier-test.ts';
import type { RateLawFit } from './fit-rate-law.ts';
import { prepareRateLaw, rateLawAt } from './integrated-rate-law.ts';
import { type RunsTestResult, runsTest } from './runs-test.ts';

/**
 * Residual diagnostics of a fitted rate law: fitted values, residuals, leverage, internally and
 * externally studentised residuals, possible outliers, and the runs test on the residual signs.
 *
 * Why: a chemist must see whether a point sits far from the curve (a possible outlier — to be
 * investigated, never dropped by the program) and whether the residuals bend (the law is wrong).
 *
 * Formula in words: residual eᵢ = yᵢ − ŷᵢ (or ln yᵢ − ln ŷᵢ for the proportional error model). Leverage
 * hᵢ = jᵢᵀ(JᵀJ)⁻¹jᵢ with jᵢ the row of the model's Jacobian at tᵢ (the tangent-plane approximation for a
 * nonlinear model). Internally studentised rᵢ = eᵢ/(s·√(1 − hᵢ)); externally studentised
 * tᵢ = rᵢ·√((ν − 1)/(ν − rᵢ²)), ν = N − p, which is the residual scaled by the SD estimated without
 * point i. |tᵢ| above the Bonferroni-corrected two-sided t quantile t(1 − 0.05/(2N); N − p − 1)
 * flags a possible outlier (`bonferroni-outlier-test.ts`: at most 5 % of clean series get a flag).
 *
 * Reference: D. A. Belsley, E. Kuh & R. E. Welsch, Regression Diagnostics (1980) §2.1 (from memory);
 * NIST/SEMATECH e-Handbook §4.4.4 "How can I tell if a model fits my data?"; Cook & Weisberg, Residuals and
 * Influence in Regression (1982) §2.2 (studentised residuals, from memory).
 *
 * Throws nothing: where 1 − hᵢ or ν − rᵢ² is not positive (a point that alone determines a parameter,
 * or ν < 2) the studentised residuals are null; every number in the result is finite (non-finite → null).
 *
 * Example: for a straight line through (0, 0), (1, 1), (2, 2), (3, 4) the leverages are 0.7, 0.3, 0.3, 0.7.
 */

/** Leverage this close to 1 means the point fixes the curve by itself; studentising is then meaningless. */
const LEVERAGE_LIMIT = 1 - 1e-10;

export interface ResidualPoint {
  time: number;
  value: number;
  fitted: number | null;
  residual: number | null;
  leverage: number | null;
  studentised: number | null;
  externallyStudentised: number | null;
}

export interface ResidualDiagnostics {
  model: RateLawFit['model'];
  residualScale: 'value' | 'ln(value)';
  points: ResidualPoint[];
  runsTest: RunsTestResult;
  /** Critical |tᵢ| of this series, t(1 − 0.05/(2N); N − p − 1); null when N − p − 1 < 1 (no test). */
  outlierThreshold: number | null;
  /** Indices into `points` with |externally studentised residual| above the threshold. */
  possibleOutliers: number[];
}

export function residualDiagnostics(
  fit: RateLawFit,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
): ResidualDiagnostics {
  const count = times.length;
  const p = fit.parameterCount;
  const logScale = fit.errorModel === 'proportional';
  const law = prepareRateLaw(fit.model, fit.initialValue, fit.rateConstant, fit.n);
  const jacobian = new Float64Array(count * p);
  const fitted = new Float64Array(count);
  const residuals = new Float64Array(count);
  const normal = new Float64Array(p * p);
  const row = new Float64Array(3);
  for (let i = 0; i < count; i++) {
    const predicted = rateLawAt(law, times[i]!, row);
    fitted[i] = predicted;
    residuals[i] = logScale ? Math.log(values[i]!) - Math.log(predicted) : values[i]! - predicted;
    for (let a = 0; a < p; a++) {
      const entry = logScale ? row[a]! / predicted : row[a]!;
      jacobian[i * p + a] = entry;
      for (let b = 0; b <= a; b++) normal[a * p + b] = normal[a * p + b]! + entry * jacobian[i * p + b]!;
    }
  }
  for (let a = 0; a < p; a++) for (let b = 0; b < a; b++) normal[b * p + a] = normal[a * p + b]!;
  const inverse = invertSmallSymmetric(normal, p);
  const s = fit.residualStandardDeviation;
  const nu = fit.degreesOfFreedom;
  const threshold = bonferroniOutlierCriticalValue(count, p);
  const points: ResidualPoint[] = new Array(count);
  const possibleOutliers: number[] = [];
  for (let i = 0; i < count; i++) {
    let leverage: number | null = null;
    if (inverse !== null) {
      let h = 0;
      for (let a = 0; a < p; a++) {
        for (let b = 0; b < p; b++) h += jacobian[i * p + a]! * inverse[a * p + b]! * jacobian[i * p + b]!;
      }
      leverage = Math.min(1, Math.max(0, h));
    }
    let studentised: number | null = null;
    let externallyStudentised: number | null = null;
    if (leverage !== null && leverage < LEVERAGE_LIMIT && s > 0) {
      studentised = residuals[i]! / (s * Math.sqrt(1 - leverage));
      const room = nu - studentised * studentised;
      if (nu >= 2 && room > 0) externallyStudentised = studentised * Math.sqrt((nu - 1) / room);
    }
    if (externallyStudentised !== null && threshold !== null && Math.abs(externallyStudentised) > threshold)
      possibleOutliers.push(i);
    points[i] = {
      time: times[i]!,
      value: values[i]!,
      fitted: finiteOrNull(fitted[i]!),
      residual: finiteOrNull(residuals[i]!),
      leverage: leverage === null ? null : finiteOrNull(leverage),
      studentised: studentised === null ? null : finiteOrNull(studentised),
      externallyStudentised: externallyStudentised === null ? null : finiteOrNull(externallyStudentised),
    };
  }
  return {
    model: fit.model,
    residualScale: logScale ? 'ln(value)' : 'value',
    points,
    runsTest: runsTest(residuals),
    outlierThreshold: threshold,
    possibleOutliers,
  };
}

function finiteOrNull(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}
