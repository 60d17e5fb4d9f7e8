import { linearRegression } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { linearLeastSquares } from '../numeric/linear-least-squares.ts';
import { type AncovaModel, ancovaDesign } from './ancova-design.ts';
import { ancovaResidualSum } from './ancova-residual-sums.ts';
import type { TransformedBatch } from './stability-batch.ts';

const example: TransformedBatch[] = [
  { batch: 'A', times: [0, 1, 2], responses: [10, 9, 8] },
  { batch: 'B', times: [0, 1, 2], responses: [11, 10, 9.5] },
];

// Invented three-batch condition with unequal sampling, as in real stability studies.
const uneven: TransformedBatch[] = [
  { batch: 'L1', times: [0, 3, 6, 9, 12, 18, 24], responses: [100.4, 99.5, 98.6, 97.9, 96.9, 95.2, 93.8] },
  { batch: 'L2', times: [0, 3, 6, 12, 18], responses: [99.8, 99.1, 98.0, 96.5, 94.6] },
  { batch: 'L3', times: [0, 6, 12, 24, 36], responses: [100.9, 98.9, 97.1, 93.6, 90.1] },
];

describe('ancovaResidualSum', () => {
  it('gives the documented example (hand computation of the centred sums)', () => {
    expect(ancovaResidualSum(example, 'separate').residualSumOfSquares).toBeCloseTo(1 / 24, 12);
    expect(ancovaResidualSum(example, 'common-slope').residualSumOfSquares).toBeCloseTo(5 / 48, 12);
    expect(ancovaResidualSum(example, 'pooled').residualSumOfSquares).toBeCloseTo(103 / 48, 12);
  });

  it.each<AncovaModel>(['separate', 'common-slope', 'pooled'])(
    'equals the least-squares fit of the indicator design for the %s model',
    (model) => {
      const design = ancovaDesign(uneven, model);
      const fit = linearLeastSquares(design.rows, design.response, { hasIntercept: true });
      const closed = ancovaResidualSum(uneven, model);
      expect(closed.degreesOfFreedom).toBe(fit.degreesOfFreedom);
      expect(closed.residualSumOfSquares / fit.residualSumOfSquares).toBeCloseTo(1, 10);
    },
  );

  it('separate lines equal the sum of per-batch straight-line fits (simple-statistics as reference)', () => {
    const perBatch = uneven.map((batch) => {
      const { m, b } = linearRegression(batch.times.map((time, index) => [time, batch.responses[index]!]));
      return batch.times.reduce(
        (sum, time, index) => sum + (batch.responses[index]! - (b + m * time)) ** 2,
        0,
      );
    });
    const expected = perBatch.reduce((sum, value) => sum + value, 0);
    expect(ancovaResidualSum(uneven, 'separate').residualSumOfSquares / expected).toBeCloseTo(1, 10);
  });

  it('refuses a batch with every result at one time', () => {
    const flat: TransformedBatch[] = [...example, { batch: 'C', times: [3, 3], responses: [9, 9.1] }];
    expect(() => ancovaResidualSum(flat, 'separate')).toThrow(/Batch C has every result at one time/);
  });
});
