import { describe, expect, it } from 'vitest';
import { predictOnLine } from '../../../tests/reference/predict-on-line.ts';
import { simpleLinearRegression } from '../../../tests/reference/simple-linear-regression.ts';
import { fitRateLaw } from '../order/fit-rate-law.ts';
import { predictedValue } from './predicted-value.ts';

const times = [0, 3, 6, 9, 12, 18, 24];
const values = [100.4, 99.1, 98.3, 96.6, 95.9, 93.2, 91.1];

describe('predictedValue against the straight-line CI and PI (NIST/SEMATECH §4.5.2.2, via the numeric core)', () => {
  it('zero order (a straight line): CI and PI at 36 months equal predictOnLine', () => {
    const fit = fitRateLaw(0, times, values, 'constant', { initialValue: 100, rateConstant: 0.4 });
    const ours = predictedValue(fit, 36, 0.95);
    const reference = predictOnLine(simpleLinearRegression(times, values), 36, 0.95);
    expect(ours.estimate!).toBeCloseTo(reference.estimate, 8);
    expect(ours.confidenceInterval![0]).toBeCloseTo(reference.confidenceInterval[0], 6);
    expect(ours.confidenceInterval![1]).toBeCloseTo(reference.confidenceInterval[1], 6);
    expect(ours.predictionInterval![0]).toBeCloseTo(reference.predictionInterval[0], 6);
    expect(ours.predictionInterval![1]).toBeCloseTo(reference.predictionInterval[1], 6);
  });

  it('first order with proportional error is the ln-line: limits are the exponentiated straight-line limits', () => {
    const fit = fitRateLaw(1, times, values, 'proportional', { initialValue: 100, rateConstant: 0.004 });
    const ours = predictedValue(fit, 36, 0.95);
    const reference = predictOnLine(simpleLinearRegression(times, values.map(Math.log)), 36, 0.95);
    expect(Math.log(ours.estimate!)).toBeCloseTo(reference.estimate, 8);
    expect(Math.log(ours.confidenceInterval![0])).toBeCloseTo(reference.confidenceInterval[0], 6);
    expect(Math.log(ours.predictionInterval![1])).toBeCloseTo(reference.predictionInterval[1], 6);
  });

  it('doc example: C0 = 100, k = 0.01 /month predicts 100·e^(−0.24) = 78.66 at 24 months', () => {
    const exact = times.map((t) => 100 * Math.exp(-0.01 * t) + (t % 2 === 0 ? 0.01 : -0.01));
    const fit = fitRateLaw(1, times, exact, 'constant', { initialValue: 100, rateConstant: 0.01 });
    expect(predictedValue(fit, 24, 0.95).estimate!).toBeCloseTo(78.66, 1);
  });

  it('a rising second-order curve past its singularity gives estimate null, not a number', () => {
    const rising = fitRateLaw(2, [0, 1, 2, 3], [10, 11.1, 12.4, 14.3], 'constant', {
      initialValue: 10,
      rateConstant: -0.01,
    });
    const result = predictedValue(rising, 1000, 0.95);
    expect(result.estimate).toBeNull();
    expect(result.confidenceInterval).toBeNull();
  });
});
