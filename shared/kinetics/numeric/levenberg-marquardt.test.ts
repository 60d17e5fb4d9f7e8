import { describe, expect, it } from 'vitest';
import { stabilityProgramme } from './benchmark-series.ts';
import { KineticsError } from './kinetics-error.ts';
import { levenbergMarquardt, type NonlinearProblem } from './levenberg-marquardt.ts';
import { NIST_NONLINEAR_HIGHER, NIST_NONLINEAR_LOWER_AVERAGE, nistNonlinearProblem } from './nist-models.ts';
import { type NistDataset, readNistDataset, significantDigits } from './nist-strd-reader.ts';

/** The brief's bar: parameters to 6 significant digits, certified standard deviations to 4. */
const PARAMETER_DIGITS = 6;
const STANDARD_DEVIATION_DIGITS = 4;

function digitsOf(dataset: NistDataset, fit: ReturnType<typeof levenbergMarquardt>) {
  return {
    parameters: Math.min(
      ...dataset.parameters.map((p, j) => significantDigits(fit.parameters[j]!, p.estimate)),
    ),
    standardDeviations: Math.min(
      ...dataset.parameters.map((p, j) =>
        significantDigits(fit.standardErrors[j] ?? Number.NaN, p.standardDeviation),
      ),
    ),
  };
}

/** Half a unit in the last place of a double. */
const halfUlp = (value: number): number => 2 ** (Math.floor(Math.log2(Math.abs(value))) - 53);

// Certified values: NIST StRD nonlinear regression, https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml.
describe('levenbergMarquardt on NIST StRD lower and average difficulty problems, both starts', () => {
  for (const analytic of [true, false]) {
    for (const name of NIST_NONLINEAR_LOWER_AVERAGE) {
      for (const start of [1, 2] as const) {
        it(`${name}, start ${start}, ${analytic ? 'analytic' : 'central-difference'} Jacobian`, () => {
          const dataset = readNistDataset(name);
          const fit = levenbergMarquardt(nistNonlinearProblem(dataset, start, analytic));
          expect(fit.converged, fit.reason).toBe(true);
          const digits = digitsOf(dataset, fit);
          expect(digits.parameters).toBeGreaterThanOrEqual(PARAMETER_DIGITS);
          expect(fit.degreesOfFreedom).toBe(dataset.degreesOfFreedom);
          if (name !== 'Lanczos1') {
            // Full precision is claimed exactly where it is reached.
            expect(fit.standardErrorPrecision).toBe('full');
            expect(digits.standardDeviations).toBeGreaterThanOrEqual(STANDARD_DEVIATION_DIGITS);
            expect(
              significantDigits(fit.residualSumOfSquares, dataset.residualSumOfSquares),
            ).toBeGreaterThanOrEqual(STANDARD_DEVIATION_DIGITS);
          }
        });
      }
    }
  }

  it('Lanczos1: its certified standard deviations lie beyond double precision, and the test shows why', () => {
    // Lanczos1's residuals (certified RSS 1.43e-25 over 24 points, about 8e-14 each) are only
    // ~170 units in the last place of the fitted values (up to 2.5). Rounding the model value to
    // double alone moves each residual by up to half a unit in the last place, i.e. by more than
    // 1e-4 of the residual, so no double-precision evaluation of the model can give the RSS —
    // and the standard deviations, which scale with √RSS — to 4 digits. The parameters, which do
    // not depend on the residual size, are still required to 6 digits above.
    const dataset = readNistDataset('Lanczos1');
    const fit = levenbergMarquardt(nistNonlinearProblem(dataset, 2));
    const problem = nistNonlinearProblem(dataset, 2);
    const fitted = problem.x.map((x, i) => problem.model(fit.parameters, x, i));
    const rmsResidual = Math.sqrt(dataset.residualSumOfSquares / dataset.y.length);
    const roundingBound = Math.max(...fitted.map(halfUlp)) / rmsResidual;
    expect(roundingBound).toBeGreaterThan(10 ** -STANDARD_DEVIATION_DIGITS);
    // The solver says so instead of returning the standard deviations as if they were exact.
    expect(fit.standardErrorPrecision).toBe('limited-by-rounding');
    expect(fit.reason).toMatch(/standard errors carry only about \d significant digits/);
    // What double precision does reach (measured ≈ 2.8–3.2 digits); a regression below 2.5 fails.
    expect(digitsOf(dataset, fit).standardDeviations).toBeGreaterThanOrEqual(2.5);
  });
});

describe('levenbergMarquardt on NIST StRD higher difficulty problems: never a silent wrong answer', () => {
  for (const analytic of [true, false]) {
    for (const name of NIST_NONLINEAR_HIGHER) {
      for (const start of [1, 2] as const) {
        it(`${name}, start ${start}, ${analytic ? 'analytic' : 'central-difference'} Jacobian: matches if converged`, () => {
          const dataset = readNistDataset(name);
          const fit = levenbergMarquardt(nistNonlinearProblem(dataset, start, analytic));
          if (fit.converged) {
            const digits = digitsOf(dataset, fit);
            expect(digits.parameters).toBeGreaterThanOrEqual(PARAMETER_DIGITS);
            expect(digits.standardDeviations).toBeGreaterThanOrEqual(STANDARD_DEVIATION_DIGITS);
          } else {
            expect(fit.reason.length).toBeGreaterThan(0);
          }
          expect(fit.parameters.every(Number.isFinite)).toBe(true);
          expect(Number.isFinite(fit.residualSumOfSquares)).toBe(true);
        });
      }
    }
  }
});

describe('levenbergMarquardt small cases and degenerate inputs', () => {
  const decay: NonlinearProblem = {
    model: (p, x) => p[0]! * Math.exp(-p[1]! * x),
    x: [0, 1, 2, 3, 4, 5],
    y: [0, 1, 2, 3, 4, 5].map((x) => 2 * Math.exp(-0.5 * x)),
    initial: [1, 1],
  };
  it('recovers noise-free first-order decay exactly (the doc-comment example; constructed data)', () => {
    const fit = levenbergMarquardt(decay);
    expect(fit.converged).toBe(true);
    expect(fit.parameters[0]).toBeCloseTo(2, 10);
    expect(fit.parameters[1]).toBeCloseTo(0.5, 10);
    expect(fit.standardErrors.every((value) => Number.isFinite(value) && value < 1e-8)).toBe(true);
  });
  it('a singular Jacobian (parameters entering only as a sum) gives converged: false with a reason', () => {
    const fit = levenbergMarquardt({
      model: (p, x) => (p[0]! + p[1]!) * x,
      x: [1, 2, 3, 4],
      y: [2.1, 3.9, 6.2, 7.8],
      initial: [0.5, 0.5],
    });
    expect(fit.converged).toBe(false);
    expect(fit.reason).toMatch(/singular/);
    expect(fit.parameters.every(Number.isFinite)).toBe(true);
  });
  it('a model that is not finite at the start gives converged: false', () => {
    const fit = levenbergMarquardt({ ...decay, model: (p, x) => Math.log(-p[0]!) * x, initial: [1, 1] });
    expect(fit.converged).toBe(false);
    expect(fit.reason).toMatch(/not finite/);
  });
  it('steps into a region where the model is NaN are rejected, not propagated', () => {
    // √b is NaN for b < 0; the data want b = 0.04, and a full step from b = 1 would overshoot below 0.
    const fit = levenbergMarquardt({
      model: (p, x) => Math.sqrt(p[0]!) * x,
      x: [1, 2, 3, 4],
      y: [0.2, 0.4, 0.6, 0.8],
      initial: [1],
    });
    expect(fit.converged).toBe(true);
    expect(fit.parameters[0]).toBeCloseTo(0.04, 10);
  });
  it('the iteration limit gives converged: false with a reason', () => {
    const limited = levenbergMarquardt(decay, { maxIterations: 1 });
    expect(limited.converged).toBe(false);
    expect(limited.reason).toMatch(/iterations/);
    expect(levenbergMarquardt(decay).converged).toBe(true);
  });
  it('NaN or Infinity in the data or start → invalid-input; n ≤ p → too-few-points', () => {
    const codeOf = (problem: NonlinearProblem): string | undefined => {
      try {
        levenbergMarquardt(problem);
      } catch (error) {
        return error instanceof KineticsError ? error.code : 'other';
      }
      return undefined;
    };
    expect(codeOf({ ...decay, y: [1, Number.NaN, 1, 1, 1, 1] })).toBe('invalid-input');
    expect(codeOf({ ...decay, x: [0, 1, 2, 3, 4, Number.POSITIVE_INFINITY] })).toBe('invalid-input');
    expect(codeOf({ ...decay, initial: [Number.NaN, 1] })).toBe('invalid-input');
    expect(codeOf({ ...decay, weights: [1, 1, 1, 0, 1, 1] })).toBe('invalid-input');
    expect(codeOf({ ...decay, x: [0, 1], y: [2, 1.2] })).toBe('too-few-points');
  });
  it('weights equal to 2 are the same as listing the point twice (common practice)', () => {
    const x = [0, 1, 2, 3, 4];
    const y = [2.02, 1.19, 0.75, 0.43, 0.28];
    const weighted = levenbergMarquardt({ ...decay, x, y, weights: [2, 1, 1, 1, 1] });
    const replicated = levenbergMarquardt({ ...decay, x: [0, ...x], y: [2.02, ...y] });
    expect(weighted.parameters[0]).toBeCloseTo(replicated.parameters[0]!, 9);
    expect(weighted.parameters[1]).toBeCloseTo(replicated.parameters[1]!, 9);
    expect(weighted.residualSumOfSquares).toBeCloseTo(replicated.residualSumOfSquares, 12);
  });
});

describe('levenbergMarquardt polish when the sum of squares is noisier than 64 ε', () => {
  // A free-order rate law fitted on the log scale: ln C = ln(C0^(1−n) + (n − 1)·k·t)/(1 − n), to the
  // logarithms of benchmark lot 679 (`stabilityProgramme()`, 12 points). Its residuals are about a
  // thousandth of the values they are differences of, so the sum of squares carries rounding noise
  // near 1e-12 of itself; a polish that allowed only 64 ε of rise rejected the last Gauss–Newton
  // steps and stopped 7.6–8.1 digits from the minimum (measured before the change).
  // Reference: the minimum computed with mpmath 1.3.0 at 60 digits (Gauss–Newton to a step below 1e-45).
  const minimum = [99.7480852143026, 0.0362039817134937, 0.708954946213065]; // 15 of the 60 digits
  const lot = stabilityProgramme()[679]!;
  const base = (b: readonly number[], t: number) => b[0]! ** (1 - b[2]!) + (b[2]! - 1) * b[1]! * t;
  const problem = (initial: number[]): NonlinearProblem => ({
    model: (b, t) => Math.log(base(b, t)) / (1 - b[2]!),
    jacobian: (b, t) => {
      const value = base(b, t);
      const m = 1 - b[2]!;
      const valueByOrder = -Math.log(b[0]!) * b[0]! ** m + b[1]! * t;
      return [b[0]! ** -b[2]! / value, -t / value, valueByOrder / (value * m) + Math.log(value) / (m * m)];
    },
    x: lot.observations.map((point) => point.time),
    y: lot.observations.map((point) => Math.log(point.value)),
    initial,
  });
  for (const initial of [
    [100, 0.05, 1.2],
    [99, 0.03, 0.5],
    [100, 0.04, 1.5],
  ]) {
    it(`reaches the 60-digit minimum to ≥ 11 digits from (${initial.join(', ')})`, () => {
      const fit = levenbergMarquardt(problem(initial));
      expect(fit.converged).toBe(true);
      minimum.forEach((value, j) => {
        expect(significantDigits(fit.parameters[j]!, value)).toBeGreaterThanOrEqual(11);
      });
    });
  }
});
