import { readFileSync } from 'node:fs';
import path from 'node:path';
import jStat from 'jstat';
import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { analyseDataset } from './analyse-dataset.ts';
import {
  FORMATION_EA,
  FORMATION_LN_A,
  FORMATION_TEMPERATURES_C,
  formationRate,
  formationSeries,
  LOSS_CASES,
} from './dataset-arrhenius-fixture.ts';
import { excursionImpact } from './temperature/excursion-impact.ts';
import type { Series } from './types.ts';
import { ENGINE_VERSION } from './version.ts';

/*
 * The Arrhenius step of an attribute that increases (a degradation product, water): the line is
 * fitted to the zero-order formation rate dC/dt = −k₀. The data are built from the Arrhenius law
 * k = A·exp(−Ea/(R·T)) (IUPAC Gold Book, "Arrhenius equation", doi 10.1351/goldbook.A00446;
 * OpenStax Chemistry 2e §12.5) with Ea = 90 kJ/mol and k_f(25 °C) = 0.05 % per month.
 */

const GAS_CONSTANT = 8.31446261815324;
const relative = (actual: number | null | undefined, expected: number, tolerance: number) => {
  expect(actual).not.toBeNull();
  expect(actual).not.toBeUndefined();
  expect(Math.abs((actual as number) - expected) / Math.abs(expected)).toBeLessThan(tolerance);
};
const increasing = { direction: 'increasing' as const, upperLimit: 1, storageTemperatureC: 25 };

describe('Arrhenius of an increasing attribute: the zero-order formation rate', () => {
  const result = analyseDataset(formationSeries(), increasing);
  const arrhenius = result.arrhenius!;

  it('fits the formation rate −k₀ in % per month, zero order by rule, and says so', () => {
    expect(arrhenius.rateSense).toBe('formation');
    expect(arrhenius.order).toBe(0);
    expect(arrhenius.orderSource).toBe('formation');
    expect(arrhenius.kUnit).toBe('%/month');
    expect(arrhenius.excludedSeries).toEqual([]);
    expect(arrhenius.notApplicableReason).toBeNull();
    // Each series' own zero-order k is the negative of the formation rate.
    const zeroOrderK = result.series[0]!.analysis!.models.find((model) => model.order === 0)!.k!;
    expect(zeroOrderK).toBeLessThan(0);
    expect(arrhenius.rateConstants.map((point) => point.temperatureC)).toEqual([...FORMATION_TEMPERATURES_C]);
    for (const point of arrhenius.rateConstants) relative(point.k, formationRate(point.temperatureC), 1e-9);
    expect(result.methodStatement.temperature).toContain('formation rate (the attribute increases)');
    expect(result.methodStatement.temperature).toContain('in %/month');
    expect(result.warnings.map((warning) => warning.code)).not.toContain('no-order-named');
    expect(result.warnings.map((warning) => warning.code)).not.toContain('order-disagreement');
  });

  it('recovers Ea and ln A of the generating Arrhenius law to 1e-9', () => {
    relative(arrhenius.fit?.activationEnergy, FORMATION_EA, 1e-9);
    expect(Math.abs(arrhenius.fit!.lnPreExponentialFactor - FORMATION_LN_A)).toBeLessThan(
      1e-9 * FORMATION_LN_A,
    );
    expect(arrhenius.fit?.n).toBe(4);
    expect(arrhenius.eyring?.fit).not.toBeNull();
  });

  it('agrees with simple-statistics linearRegression, slope of each series then ln(rate) on 1/T', () => {
    // Independent pipeline: each series' formation rate as the least-squares slope of value on
    // time (simple-statistics), batches at one temperature averaged on the ln scale (equal
    // weights: their rates are equal), then the straight line of ln(rate) on 1/T.
    const byTemperature = new Map<number, number[]>();
    for (const series of formationSeries()) {
      const { m } = linearRegression(series.observations.map((point) => [point.time, point.value]));
      byTemperature.set(series.temperatureC!, [
        ...(byTemperature.get(series.temperatureC!) ?? []),
        Math.log(m),
      ]);
    }
    const points = [...byTemperature].map(([temperatureC, lnRates]) => [
      1 / (temperatureC + 273.15),
      lnRates.reduce((sum, value) => sum + value, 0) / lnRates.length,
    ]);
    const line = linearRegression(points);
    relative(arrhenius.fit?.activationEnergy, -GAS_CONSTANT * line.m, 1e-9);
    expect(Math.abs(arrhenius.fit!.lnPreExponentialFactor - line.b)).toBeLessThan(1e-9 * Math.abs(line.b));
  });

  it('predicts the formation rate at the storage temperature; t90 and half-life do not apply', () => {
    const prediction = arrhenius.prediction!;
    relative(prediction.rateConstant, 0.05, 1e-9);
    expect(prediction.extrapolation).toBeNull();
    expect(prediction.t90).toBeNull();
    expect(prediction.halfLife).toBeNull();
    expect(prediction.derivedReason).toMatch(/^a formation rate \(the attribute increases\)/);
    expect(result.methodStatement.temperature).toContain('The formation rate at 25 °C was predicted');
  });

  it('extrapolates below the fitted range with the same flag and a warning naming the formation rate', () => {
    const cold = analyseDataset(formationSeries(), { ...increasing, storageTemperatureC: 5 });
    relative(cold.arrhenius?.prediction?.rateConstant, formationRate(5), 1e-9);
    expect(cold.arrhenius?.prediction?.extrapolation).toBe('below-fitted-range');
    expect(cold.warnings).toContainEqual({
      code: 'arrhenius-extrapolation',
      message:
        'The formation rate at 5 °C is extrapolated outside the fitted 25–50 °C; the straight Arrhenius line is an assumption there.',
    });
  });

  it('gives the interval of the formation rate from the line, as for k (scattered data)', () => {
    const scattered = analyseDataset(formationSeries(0.004), { ...increasing, storageTemperatureC: 5 });
    const fit = scattered.arrhenius!.fit!;
    const prediction = scattered.arrhenius!.prediction!;
    // By hand: ln k̂₀ = a + b·d with d = 1/T₀ − x_ref, se² = Var a + d²·Var b + 2d·Cov(a, b),
    // interval exp(ln k̂₀ ± t(0.975; n − 2)·se), t from jStat.
    const { line } = fit;
    const d = 1 / (5 + 273.15) - line.referenceInverseTemperature;
    const lnK = line.valueAtReference + line.slope * d;
    const se = Math.sqrt(
      line.valueAtReferenceStandardError! ** 2 +
        d * d * line.slopeStandardError! ** 2 +
        2 * d * line.covarianceValueSlope!,
    );
    const t = jStat.studentt.inv(0.975, fit.degreesOfFreedom);
    relative(prediction.rateConstant, Math.exp(lnK), 1e-12);
    relative(prediction.confidenceInterval?.[0], Math.exp(lnK - t * se), 1e-9);
    relative(prediction.confidenceInterval?.[1], Math.exp(lnK + t * se), 1e-9);
    expect(prediction.confidenceInterval![1] / prediction.confidenceInterval![0]).toBeGreaterThan(1.001);
    // The scatter is small: the estimate stays near the generating law and inside its interval.
    relative(prediction.rateConstant, formationRate(5), 0.05);
    expect(prediction.confidenceInterval![0]).toBeLessThan(prediction.rateConstant);
    expect(prediction.confidenceInterval![1]).toBeGreaterThan(prediction.rateConstant);
  });

  it('predicts the level at storage with the sign of growth: the margin to the upper limit shrinks', () => {
    // Twelve months held at the 25 °C storage temperature: the degradant grows by k_f(25 °C)·12 = 0.6 %.
    const impact = excursionImpact({
      fit: arrhenius.fit!,
      order: arrhenius.order,
      storageTemperatureC: 25,
      rateTimeUnit: 'month',
      logTimeUnit: 'month',
      held: [{ temperatureC: 25, duration: 12 }],
      direction: 'increasing',
      latestValue: 0.3,
      limit: 1,
    });
    relative(impact.predictedChange?.estimate, 0.6, 1e-9);
    relative(impact.margin?.before, 0.7, 1e-12);
    relative(impact.margin?.after.estimate, 0.1, 1e-8);
  });
});

describe('Arrhenius of an increasing attribute: orders and series that do not fit the rule', () => {
  it('accepts the analyst’s zero order, with the same line', () => {
    const free = analyseDataset(formationSeries(), increasing).arrhenius!;
    const fixed = analyseDataset(formationSeries(), { ...increasing, order: 0 }).arrhenius!;
    expect(fixed.orderSource).toBe('analyst');
    expect(fixed.rateSense).toBe('formation');
    expect(fixed.fit).toEqual(free.fit);
  });

  it('refuses an analyst’s first or second order with the reason, and fits nothing', () => {
    for (const order of [1, 2] as const) {
      const result = analyseDataset(formationSeries(), { ...increasing, order });
      const arrhenius = result.arrhenius!;
      expect(arrhenius.rateSense).toBe('formation');
      expect(arrhenius.order).toBe(order);
      expect(arrhenius.orderSource).toBe('analyst');
      expect(arrhenius.fit).toBeNull();
      expect(arrhenius.prediction).toBeNull();
      expect(arrhenius.rateConstants).toEqual([]);
      expect(arrhenius.notApplicableReason).toBe(
        `the attribute increases, and the ${order === 1 ? 'first' : 'second'}-order law describes a loss (−dC/dt = k·C${order === 1 ? '' : '²'}), so its k is no formation rate; the Arrhenius fit of an increasing attribute uses the zero-order formation rate dC/dt: leave the order free or fix zero order`,
      );
      expect(result.methodStatement.temperature).toContain(
        `Not completed: ${arrhenius.notApplicableReason}.`,
      );
    }
  });

  it('uses the zero-order formation rate over a study’s working order of first order, and says so', () => {
    const result = analyseDataset(formationSeries(), {
      ...increasing,
      workingOrder: { order: 1, reason: 'protocol' },
    });
    expect(result.arrhenius?.order).toBe(0);
    expect(result.arrhenius?.orderSource).toBe('formation');
    relative(result.arrhenius?.fit?.activationEnergy, FORMATION_EA, 1e-9);
    expect(result.methodStatement.temperature).toContain(
      "give no formation rate, so the study's working order (first) does not enter.",
    );
  });

  it('leaves out a series that does not increase, with the reason', () => {
    const falling: Series = {
      id: 'DG-09 @ 40 °C',
      temperatureC: 40,
      timeUnit: 'month',
      valueUnit: '%',
      observations: [0, 1, 2, 3, 6].map((time) => ({ time, value: 0.5 - 0.03 * time })),
    };
    const result = analyseDataset([...formationSeries(), falling], increasing);
    expect(result.arrhenius?.excludedSeries).toEqual([
      {
        id: 'DG-09 @ 40 °C',
        reason:
          'the formation rate dC/dt = -0.0300 is not positive (no measurable increase), so its logarithm does not exist',
      },
    ]);
    relative(result.arrhenius?.fit?.activationEnergy, FORMATION_EA, 1e-9);
  });

  it('keeps fitting k of loss for "either": a rising data set has no Arrhenius line, as before', () => {
    const arrhenius = analyseDataset(formationSeries(), { direction: 'either', lowerLimit: 0, upperLimit: 1 })
      .arrhenius!;
    expect(arrhenius.rateSense).toBe('loss');
    expect(arrhenius.fit).toBeNull();
    expect(arrhenius.excludedSeries).toHaveLength(8);
    expect(arrhenius.excludedSeries[0]?.reason).toBe(
      'k = -0.0500 is not positive (no measurable loss), so ln k does not exist',
    );
  });
});

describe('Arrhenius of a falling attribute: unchanged by the formation rate', () => {
  // Stored with engine 0.3.0, before rising attributes had an Arrhenius fit; the engine version
  // in the method statement is written as "<engine version>".
  const before = JSON.parse(
    readFileSync(path.join(import.meta.dirname, '__snapshots__', 'dataset-arrhenius-before.json'), 'utf8'),
  ) as Record<string, unknown>;

  it('stores a case for decreasing, no direction, either and a fixed order', () => {
    expect(Object.keys(before)).toEqual(LOSS_CASES.map((entry) => entry.name));
  });

  for (const entry of LOSS_CASES) {
    it(`gives the same Arrhenius result, warnings and method statement (${entry.name}), rateSense 'loss'`, () => {
      const { arrhenius, warnings, methodStatement } = analyseDataset(entry.series, entry.options);
      expect(arrhenius?.rateSense).toBe('loss');
      expect(arrhenius?.fit).not.toBeNull();
      const { rateSense: _sense, ...rest } = arrhenius!;
      const now = JSON.stringify({ arrhenius: rest, warnings, methodStatement }, null, 2)
        .split(ENGINE_VERSION)
        .join('<engine version>');
      expect(now).toBe(JSON.stringify(before[entry.name], null, 2));
    });
  }
});
