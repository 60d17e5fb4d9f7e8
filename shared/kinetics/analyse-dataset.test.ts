import { describe, expect, it } from 'vitest';
import { analyseDataset } from './analyse-dataset.ts';
import type { Series } from './types.ts';

const relative = (actual: number | null | undefined, expected: number, tolerance: number) => {
  expect(actual).not.toBeNull();
  expect(Math.abs((actual as number) - expected) / Math.abs(expected)).toBeLessThan(tolerance);
};

/** Noise-free second-order series C = C0/(1 + k·C0·t), C0 = 1 M, sampled to about 60 % conversion. */
function secondOrderSeries(temperatureC: number, k: number): Series {
  const halfLife = 1 / k;
  const observations = [0, 1, 2, 3, 4, 5, 6].map((step) => {
    const time = (step * halfLife) / 4;
    return { time, value: 1 / (1 + k * time) };
  });
  return { id: `HI @ ${temperatureC} °C`, observations, timeUnit: 's', valueUnit: 'M', temperatureC };
}

// 2 HI → H2 + I2: k at 283, 356, 393, 427, 508 °C from McMurry & Fay, Chemistry, Worked Example
// 12.13. OLS of ln k on 1/T gives Ea = 186.3 kJ/mol, 95 % CI [176.6, 196.0], ln A = 25.311 and
// k(293 °C) = 6.35e-7 M⁻¹ s⁻¹ (computed independently with numpy, not published;
// docs/methods.md#worked-examples).
const HYDROGEN_IODIDE: [number, number][] = [
  [283, 3.52e-7],
  [356, 3.02e-5],
  [393, 2.19e-4],
  [427, 1.16e-3],
  [508, 3.95e-2],
];

// N2O5 in CCl4 at 45 °C (Eyring & Daniels 1930): NLS first-order k = 6.213e-4 1/s (computed with scipy).
const DINITROGEN_PENTOXIDE: Series = {
  id: 'N2O5',
  timeUnit: 's',
  valueUnit: 'mol/L',
  observations: [
    [0, 2.33],
    [184, 2.08],
    [319, 1.91],
    [526, 1.67],
    [867, 1.36],
    [1198, 1.11],
    [1877, 0.72],
    [2315, 0.55],
    [3144, 0.34],
  ].map(([time, value]) => ({ time: time as number, value: value as number })),
};

describe('analyseDataset', () => {
  it('recovers the published Arrhenius fit of the HI decomposition from series at five temperatures', () => {
    const result = analyseDataset(
      HYDROGEN_IODIDE.map(([temperature, k]) => secondOrderSeries(temperature, k)),
      { order: 2, storageTemperatureC: 293 },
    );
    const arrhenius = result.arrhenius;
    expect(arrhenius?.order).toBe(2);
    expect(arrhenius?.orderSource).toBe('analyst');
    expect(arrhenius?.kUnit).toBe('1/(M·s)');
    expect(arrhenius?.rateConstants).toHaveLength(5);
    for (const [index, [, k]] of HYDROGEN_IODIDE.entries())
      relative(arrhenius?.rateConstants[index]?.k, k, 1e-6);
    relative(arrhenius?.fit?.activationEnergy, 186.3e3, 5e-4);
    relative(arrhenius?.fit?.activationEnergyInterval?.[0], 176.6e3, 5e-4);
    relative(arrhenius?.fit?.activationEnergyInterval?.[1], 196.0e3, 5e-4);
    relative(arrhenius?.fit?.lnPreExponentialFactor, 25.311, 5e-4);
    relative(arrhenius?.prediction?.rateConstant, 6.35e-7, 5e-3);
    expect(arrhenius?.prediction?.extrapolation).toBeNull();
    // Second order: t90 depends on the initial value, so none is given at the storage temperature.
    expect(arrhenius?.prediction?.t90).toBeNull();
    expect(result.methodStatement.temperature).toMatch(/analyst's second order/);
  });

  it('chooses the common order by summed AICc and gives t90 = ln(10/9)/k at the storage temperature', () => {
    // Noise-free first-order loss with Ea = 100 kJ/mol (Arrhenius law, IUPAC Gold Book A00446).
    const gasConstant = 8.31446261815324;
    const k40 = 0.02;
    const series: Series[] = [40, 50, 60, 70].map((temperatureC) => {
      const k = k40 * Math.exp((-100e3 / gasConstant) * (1 / (temperatureC + 273.15) - 1 / 313.15));
      const observations = [0, 1, 2, 3, 4, 5, 6].map((step) => {
        const time = (step * 0.25) / k;
        return { time, value: 100 * Math.exp(-k * time) * (1 + (step % 2 === 0 ? 1 : -1) * 2e-4) };
      });
      return { id: `lot @ ${temperatureC}`, observations, timeUnit: 'd', valueUnit: '%', temperatureC };
    });
    const result = analyseDataset(series, { storageTemperatureC: 25 });
    expect(result.arrhenius?.order).toBe(1);
    expect(result.arrhenius?.orderSource).toBe('data');
    relative(result.arrhenius?.fit?.activationEnergy, 100e3, 2e-3);
    const prediction = result.arrhenius?.prediction;
    expect(prediction?.extrapolation).toBe('below-fitted-range');
    relative(prediction?.t90?.estimate, Math.log(10 / 9) / (prediction?.rateConstant ?? 1), 1e-12);
    const [low, high] = prediction?.confidenceInterval ?? [0, 0];
    expect(prediction?.t90?.ci).toEqual([Math.log(10 / 9) / high, Math.log(10 / 9) / low]);
    expect(result.warnings.map((warning) => warning.code)).toContain('arrhenius-extrapolation');
  });

  it('reports a series it cannot analyse and goes on with the others', () => {
    const single: Series = {
      id: 'all at zero',
      timeUnit: 's',
      valueUnit: 'mol/L',
      observations: [2.3, 2.31, 2.29].map((value) => ({ time: 0, value })),
    };
    const result = analyseDataset([single, DINITROGEN_PENTOXIDE]);
    expect(result.series[0]?.analysis).toBeNull();
    expect(result.series[0]?.error?.code).toBe('single-time');
    expect(result.series[1]?.analysis?.selectedOrder).toBe(1);
    relative(result.series[1]?.analysis?.models[1]?.k, 6.213e-4, 1e-3);
    expect(result.arrhenius).toBeNull();
    expect(result.shelfLife).toBeNull();
    expect(result.warnings[0]).toMatchObject({ code: 'series-not-analysed' });
    expect(result.methodStatement.text).toMatch(/Not analysed: all at zero \(/);
  });

  it('leaves a series without measurable loss out of the Arrhenius fit, with the reason', () => {
    const flat: Series = {
      id: 'flat @ 5',
      timeUnit: 'd',
      valueUnit: '%',
      temperatureC: 5,
      observations: [0, 1, 2, 3, 4, 5].map((time) => ({
        time,
        value: 100 + (time % 2 === 0 ? 0.05 : -0.05) + time * 0.2,
      })),
    };
    const falling = [40, 60].map((temperatureC, index) => ({
      id: `fall @ ${temperatureC}`,
      timeUnit: 'd',
      valueUnit: '%',
      temperatureC,
      observations: [0, 1, 2, 3, 4, 5].map((time) => ({
        time,
        value: 100 * Math.exp(-(index + 1) * 0.1 * time) + (time % 2 ? 0.05 : -0.05),
      })),
    }));
    const result = analyseDataset([flat, ...falling], { order: 1 });
    expect(result.arrhenius?.excludedSeries).toEqual([
      { id: 'flat @ 5', reason: expect.stringMatching(/is not positive \(no measurable loss\)/) },
    ]);
    expect(result.arrhenius?.rateConstants.map((point) => point.temperatureC)).toEqual([40, 60]);
    expect(result.arrhenius?.fit?.intervalUnavailableReason).not.toBeNull();
  });

  it('evaluates ICH Q1E per condition with the direction taken from the limits, JSON-safe throughout', () => {
    // Single batch of the q1eShelfLife doc example (lower 95 % one-sided limit meets 95 at 28.73 months).
    const batch: Series = {
      id: 'B1',
      timeUnit: 'month',
      valueUnit: '%',
      observations: [100.1, 99.5, 99.0, 98.6, 98.1].map((value, index) => ({ time: index * 3, value })),
    };
    const result = analyseDataset([batch], { lowerLimit: 95 });
    const [condition] = result.shelfLife ?? [];
    expect(condition?.transform).toBe('none');
    expect(condition?.result?.method.direction).toBe('decreasing');
    relative(condition?.result?.shelfLife, 28.73, 5e-4);
    expect(JSON.parse(JSON.stringify(result))).toEqual(result);
  });

  it('refuses a confidence level outside (0, 1)', () => {
    expect(() => analyseDataset([DINITROGEN_PENTOXIDE], { confidenceLevel: 1 })).toThrow(/confidence level/);
  });
});
