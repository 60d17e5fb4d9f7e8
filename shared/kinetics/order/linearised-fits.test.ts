import { linearRegression, rSquared } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { linearisedFits } from './linearised-fits.ts';

// Worked examples (docs/methods.md#worked-examples): N2O5 in CCl4, 45 °C (Eyring & Daniels 1930); N2O5 gas,
// 318 K (NCERT-type exercise via wiredfaculty.com); NO2, 300 °C (Brown et al., from memory). Check values
// not printed in those sources were computed independently with numpy/scipy least squares.
const n2o5 = {
  times: [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144],
  values: [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34],
};
const n2o5Gas = {
  times: [0, 400, 800, 1200, 1600, 2000, 2400, 2800, 3200, 3600],
  values: [1.63, 1.36, 1.14, 0.93, 0.78, 0.64, 0.53, 0.43, 0.35, 0.29],
};
const no2 = { times: [0, 50, 100, 200, 300], values: [0.01, 0.00787, 0.00649, 0.00481, 0.0038] };

describe('linearisedFits against textbook worked examples: Eyring & Daniels 1930 N2O5, Brown et al. NO2 (from memory)', () => {
  it('N2O5/CCl4: ln C plot k = 6.161e-4 /s (se 3.3e-6), C0 = 2.319, R² = 0.99980; R² zero 0.93712, second 0.93963 (§4.1)', () => {
    const [zero, first, second] = linearisedFits(n2o5.times, n2o5.values);
    expect(first.k! / 6.161e-4).toBeCloseTo(1, 3);
    expect(first.slopeStandardError! / 3.3e-6).toBeCloseTo(1, 1);
    expect(first.c0!).toBeCloseTo(2.319, 3);
    expect(first.rSquared!).toBeCloseTo(0.9998, 4);
    expect(zero.rSquared!).toBeCloseTo(0.93712, 5);
    expect(second.rSquared!).toBeCloseTo(0.93963, 5);
    expect([zero.applicable, first.applicable, second.applicable]).toEqual([true, true, true]);
  });

  it('N2O5 gas: 10-point ln plot k = 4.818e-4 /s, R² = 0.99955, t½ = ln 2/k = 1439 s (published 1438 s) (§4.2)', () => {
    const first = linearisedFits(n2o5Gas.times, n2o5Gas.values)[1];
    expect(first.k! / 4.818e-4).toBeCloseTo(1, 3);
    expect(first.rSquared!).toBeCloseTo(0.99955, 5);
    expect(Math.abs(Math.LN2 / first.k! - 1438)).toBeLessThan(2);
  });

  it('NO2: 1/C plot slope 0.5431 M⁻¹s⁻¹, intercept 99.83 M⁻¹, R² 0.99997; R² zero 0.927, first 0.982 (§4.3)', () => {
    const [zero, first, second] = linearisedFits(no2.times, no2.values);
    expect(second.slope!).toBeCloseTo(0.5431, 4);
    expect(second.k!).toBeCloseTo(0.5431, 4);
    expect(second.intercept!).toBeCloseTo(99.83, 2);
    expect(second.c0!).toBeCloseTo(1 / 99.83, 6);
    expect(second.rSquared!).toBeCloseTo(0.99997, 5);
    expect(zero.rSquared!).toBeCloseTo(0.927, 3);
    expect(first.rSquared!).toBeCloseTo(0.982, 3);
  });
});

describe('linearisedFits against simple-statistics linearRegression / rSquared (independent of NIST and of this code)', () => {
  it('slope, intercept and R² of all three plots agree to 1e-10', () => {
    for (const data of [n2o5, n2o5Gas, no2]) {
      const fits = linearisedFits(data.times, data.values);
      const transforms = [(v: number) => v, Math.log, (v: number) => 1 / v];
      fits.forEach((fit, order) => {
        const points = data.times.map((t, i) => [t, transforms[order]!(data.values[i]!)] as [number, number]);
        const reference = linearRegression(points);
        const line = (x: number) => reference.b + reference.m * x;
        expect(fit.slope! / reference.m).toBeCloseTo(1, 10);
        expect(fit.intercept! / reference.b).toBeCloseTo(1, 10);
        expect(fit.rSquared!).toBeCloseTo(rSquared(points, line), 10);
      });
    }
  });
});

describe('linearisedFits not-applicable cases', () => {
  it('a non-positive value makes ln and 1/value not applicable, with a reason naming the point (common practice)', () => {
    const fits = linearisedFits(
      [0, 1, 2, 3],
      [5, 3, 1, 0],
      (index) => `the point at time ${index} (row ${index + 2})`,
    );
    expect(fits[0].applicable).toBe(true);
    for (const fit of [fits[1], fits[2]]) {
      expect(fit.applicable).toBe(false);
      expect(fit.slope).toBeNull();
      expect(fit.reason).toMatch(/time 3 \(row 5\) has value 0/);
    }
  });

  it('a rising series makes the value and ln plots rise and the 1/value plot fall: none describes a loss law (common practice)', () => {
    const rising = linearisedFits([0, 1, 2, 3], [1, 2, 3.1, 3.9]);
    expect(rising[0].applicable).toBe(false);
    expect(rising[0].reason).toMatch(/rises/);
    expect(rising[1].applicable).toBe(false);
    // A rising value makes 1/value fall, which a second-order loss law cannot produce either.
    expect(rising[2].applicable).toBe(false);
    expect(rising[2].reason).toMatch(/1\/value plot falls/);
    expect(rising[2].k).toBeLessThan(0);
    const falling = linearisedFits([0, 1, 2, 3], [4, 3, 2.1, 0.9]);
    expect(falling.map((fit) => fit.applicable)).toEqual([true, true, true]);
  });
});
