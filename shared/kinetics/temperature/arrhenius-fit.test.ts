import jStat from 'jstat';
import { linearRegression, rSquared, sum } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { arrheniusFit } from './arrhenius-fit.ts';
import { MOLAR_GAS_CONSTANT } from './physical-constants.ts';
import { predictRateConstant } from './predict-rate-constant.ts';

/** 2 HI → H2 + I2: McMurry & Fay, Chemistry, Worked Example 12.13 (docs/methods.md#worked-examples). */
const hydrogenIodide = [
  { temperatureC: 283, rateConstant: 3.52e-7 },
  { temperatureC: 356, rateConstant: 3.02e-5 },
  { temperatureC: 393, rateConstant: 2.19e-4 },
  { temperatureC: 427, rateConstant: 1.16e-3 },
  { temperatureC: 508, rateConstant: 3.95e-2 },
];
/** Relative tolerance for numbers quoted to 4 significant digits. */
const FOUR_DIGITS = 5e-4;
/** Relative tolerance for the same quantity computed two ways in double precision. */
const SAME_COMPUTATION = 1e-10;

const relative = (actual: number, expected: number): number =>
  Math.abs(actual - expected) / Math.abs(expected);

describe('arrheniusFit on the 2 HI data set', () => {
  const fit = arrheniusFit(hydrogenIodide);

  it('gives Ea ≈ 186 kJ/mol as the textbooks do', () => {
    // Zumdahl, Chemistry: An Atoms First Approach 2e, Problem 11.69: Ea = 186 kJ/mol.
    expect(fit.activationEnergy / 1000).toBeCloseTo(186, 0);
    // McMurry & Fay WE 12.13: Ea ≈ 1.9e2 kJ/mol read from the graph (2 significant figures).
    expect(Math.round(fit.activationEnergy / 1e4)).toBe(19);
    // Computed independently (numpy OLS, not published): Ea 186.3, 95 % CI [176.6, 196.0],
    // ln A 25.311, R² 0.99920.
    expect(relative(fit.activationEnergy, 186_300)).toBeLessThan(FOUR_DIGITS);
    expect(fit.activationEnergyInterval?.[0] ?? 0).toBeCloseTo(176_600, -2);
    expect(fit.activationEnergyInterval?.[1] ?? 0).toBeCloseTo(196_000, -2);
    expect(fit.lnPreExponentialFactor).toBeCloseTo(25.311, 3);
    expect(fit.rSquared ?? 0).toBeCloseTo(0.9992, 4);
    expect(fit.degreesOfFreedom).toBe(3);
    expect(fit.temperatureRangeC[0]).toBeCloseTo(283, 9);
    expect(fit.temperatureRangeC[1]).toBeCloseTo(508, 9);
  });

  it('agrees with simple-statistics linearRegression and jStat t quantile', () => {
    const points = hydrogenIodide.map(
      (m) => [1 / (m.temperatureC + 273.15), Math.log(m.rateConstant)] as [number, number],
    );
    const line = linearRegression(points);
    // simple-statistics linearRegression (general-purpose reference library).
    expect(relative(fit.activationEnergy, -MOLAR_GAS_CONSTANT * line.m)).toBeLessThan(SAME_COMPUTATION);
    expect(relative(fit.lnPreExponentialFactor, line.b)).toBeLessThan(SAME_COMPUTATION);
    const predict = (x: number): number => line.m * x + line.b;
    expect(relative(fit.rSquared ?? 0, rSquared(points, predict))).toBeLessThan(SAME_COMPUTATION);
    // Textbook OLS: se(slope) = s/√Sxx, s² = Σ residual²/(n − 2); half-width t(0.975, 3)·R·se from jStat.
    const meanX = sum(points.map((p) => p[0])) / points.length;
    const sxx = sum(points.map((p) => (p[0] - meanX) ** 2));
    const s = Math.sqrt(sum(points.map((p) => (p[1] - predict(p[0])) ** 2)) / (points.length - 2));
    const standardError = (MOLAR_GAS_CONSTANT * s) / Math.sqrt(sxx);
    expect(relative(fit.activationEnergyStandardError ?? 0, standardError)).toBeLessThan(1e-9);
    const halfWidth = jStat.studentt.inv(0.975, 3) * standardError;
    expect(relative(fit.activationEnergyInterval?.[1] ?? 0, fit.activationEnergy + halfWidth)).toBeLessThan(
      1e-7,
    );
    // se(ln A) = s·√(1/n + x̄²/Sxx), the intercept standard error of OLS (NIST e-Handbook §4.4.4).
    const interceptStandardError = s * Math.sqrt(1 / points.length + meanX ** 2 / sxx);
    expect(relative(fit.lnPreExponentialFactorStandardError ?? 0, interceptStandardError)).toBeLessThan(1e-8);
  });

  it('predicts k at 293 °C with confidence and prediction intervals', () => {
    // Computed independently (numpy, not published): k̂ = 6.35e-7; CI [4.47, 9.02]e-7; PI [3.59, 11.2]e-7.
    const prediction = predictRateConstant(fit, 293);
    expect(relative(prediction.rateConstant, 6.35e-7)).toBeLessThan(1e-3);
    expect(relative(prediction.confidenceInterval?.[0] ?? 0, 4.47e-7)).toBeLessThan(2e-3);
    expect(relative(prediction.confidenceInterval?.[1] ?? 0, 9.02e-7)).toBeLessThan(1e-3);
    expect(relative(prediction.predictionInterval?.[0] ?? 0, 3.59e-7)).toBeLessThan(2e-3);
    expect(relative(prediction.predictionInterval?.[1] ?? 0, 1.12e-6)).toBeLessThan(5e-3);
    expect(prediction.extrapolation).toBeNull();
  });

  it('flags extrapolation outside the fitted temperatures and widens the interval', () => {
    const inside = predictRateConstant(fit, 400);
    const below = predictRateConstant(fit, 25);
    const above = predictRateConstant(fit, 600);
    expect(below.extrapolation).toBe('below-fitted-range');
    expect(above.extrapolation).toBe('above-fitted-range');
    expect(below.lnRateConstantStandardError ?? 0).toBeGreaterThan(inside.lnRateConstantStandardError ?? 0);
    // Arrhenius law itself: ln k(25 °C) = ln A − Ea/(R·298.15) (IUPAC Gold Book, "Arrhenius equation").
    const direct = fit.lnPreExponentialFactor - fit.activationEnergy / (MOLAR_GAS_CONSTANT * 298.15);
    expect(relative(below.lnRateConstant, direct)).toBeLessThan(SAME_COMPUTATION);
  });

  it('returns plain JSON with no NaN or Infinity', () => {
    expect(JSON.parse(JSON.stringify(fit))).toEqual(fit);
  });
});

describe('arrheniusFit weighting', () => {
  it('is unchanged by equal relative precision (all weights equal)', () => {
    // Weighted least squares with equal weights is ordinary least squares (NIST e-Handbook §4.4.3.2).
    const withErrors = hydrogenIodide.map((m) => ({
      ...m,
      rateConstantStandardError: 0.05 * m.rateConstant,
    }));
    const weighted = arrheniusFit(withErrors, { weighting: 'inverse-variance' });
    const plain = arrheniusFit(hydrogenIodide);
    expect(relative(weighted.activationEnergy, plain.activationEnergy)).toBeLessThan(SAME_COMPUTATION);
    expect(
      relative(weighted.activationEnergyStandardError ?? 0, plain.activationEnergyStandardError ?? 1),
    ).toBeLessThan(1e-9);
    expect(weighted.weighting).toBe('inverse-variance');
  });

  it('matches the closed-form weighted slope with weights (k/se)²', () => {
    // Weighted slope Σw(x − x̄w)(y − ȳw)/Σw(x − x̄w)² (NIST e-Handbook §4.4.3.2); w = 1/Var(ln k) by the delta method.
    const relativeErrors = [0.02, 0.05, 0.03, 0.1, 0.04];
    const data = hydrogenIodide.map((m, i) => ({
      ...m,
      rateConstantStandardError: (relativeErrors[i] ?? 1) * m.rateConstant,
    }));
    const x = data.map((m) => 1 / (m.temperatureC + 273.15));
    const y = data.map((m) => Math.log(m.rateConstant));
    const w = relativeErrors.map((r) => 1 / r ** 2);
    const totalWeight = sum(w);
    const meanX = sum(x.map((xi, i) => (w[i] ?? 0) * xi)) / totalWeight;
    const meanY = sum(y.map((yi, i) => (w[i] ?? 0) * yi)) / totalWeight;
    const slope =
      sum(x.map((xi, i) => (w[i] ?? 0) * (xi - meanX) * ((y[i] ?? 0) - meanY))) /
      sum(x.map((xi, i) => (w[i] ?? 0) * (xi - meanX) ** 2));
    const fit = arrheniusFit(data, { weighting: 'inverse-variance' });
    expect(relative(fit.slope, slope)).toBeLessThan(SAME_COMPUTATION);
    expect(predictRateConstant(fit, 293).predictionInterval).toBeNull();
    expect(predictRateConstant(fit, 293).intervalUnavailableReason).toMatch(/weight/);
  });

  it('needs a positive standard error for every k', () => {
    expect(() => arrheniusFit(hydrogenIodide, { weighting: 'inverse-variance' })).toThrow(
      expect.objectContaining({ code: 'invalid-input' }),
    );
  });
});

describe('arrheniusFit degenerate cases', () => {
  it('two points: exact Ea, no interval, reason given', () => {
    const fit = arrheniusFit([hydrogenIodide[0]!, hydrogenIodide[4]!]);
    // Computed independently (not published): two-point Ea (283/508 °C) = 186.7 kJ/mol.
    expect(fit.activationEnergy / 1000).toBeCloseTo(186.7, 1);
    expect(fit.degreesOfFreedom).toBe(0);
    expect(fit.activationEnergyInterval).toBeNull();
    expect(fit.activationEnergyStandardError).toBeNull();
    expect(fit.rSquared).toBeNull();
    expect(fit.intervalUnavailableReason).toMatch(/degrees of freedom/);
    const prediction = predictRateConstant(fit, 25);
    expect(prediction.confidenceInterval).toBeNull();
    expect(prediction.intervalUnavailableReason).not.toBeNull();
    expect(JSON.parse(JSON.stringify(fit))).toEqual(fit);
  });

  it('throws typed errors for too few points, one temperature, k ≤ 0 and impossible temperatures', () => {
    const code = (c: string) => expect.objectContaining({ code: c });
    expect(() => arrheniusFit([hydrogenIodide[0]!])).toThrow(code('too-few-points'));
    expect(() => arrheniusFit([])).toThrow(code('too-few-points'));
    expect(() =>
      arrheniusFit([
        { temperatureC: 40, rateConstant: 1e-3 },
        { temperatureC: 40, rateConstant: 2e-3 },
        { temperatureC: 40, rateConstant: 3e-3 },
      ]),
    ).toThrow(code('zero-variance'));
    expect(() => arrheniusFit([...hydrogenIodide, { temperatureC: 300, rateConstant: 0 }])).toThrow(
      code('non-positive-value'),
    );
    expect(() => arrheniusFit([...hydrogenIodide, { temperatureC: 300, rateConstant: -1e-6 }])).toThrow(
      code('non-positive-value'),
    );
    expect(() => arrheniusFit([...hydrogenIodide, { temperatureC: -300, rateConstant: 1e-6 }])).toThrow(
      code('invalid-input'),
    );
    expect(() => arrheniusFit([...hydrogenIodide, { temperatureC: -273.15, rateConstant: 1e-6 }])).toThrow(
      code('invalid-input'),
    );
    expect(() => arrheniusFit(hydrogenIodide, { confidence: 1 })).toThrow(code('invalid-input'));
    expect(() => predictRateConstant(arrheniusFit(hydrogenIodide), Number.NaN)).toThrow(
      code('invalid-input'),
    );
  });
});
