import { describe, expect, it } from 'vitest';
import { linearisedFits } from './linearised-fits.ts';
import { startingValues } from './starting-values.ts';

describe('startingValues (from the linear plots of integrated rate laws, OpenStax Chemistry 2e §12.4)', () => {
  it('uses each order’s own plot when it exists', () => {
    const times = [0, 1, 2, 3];
    const values = [100, 50, 25, 12.5];
    const fits = linearisedFits(times, values);
    expect(startingValues(1, fits, 100).rateConstant).toBeCloseTo(Math.LN2, 12);
    expect(startingValues(1, fits, 100).initialValue).toBeCloseTo(100, 10);
    expect(startingValues(2, fits, 100).rateConstant).toBeCloseTo(fits[2].slope!, 12);
  });

  it('doc example: without an ln plot, k = k0/C0 for first order and k0/C0² for second order', () => {
    const times = [0, 1, 2, 3];
    const values = [100, 98, 96, 0];
    const fits = linearisedFits(times, values);
    const line = fits[0];
    expect(fits[1].applicable).toBe(false);
    expect(startingValues(1, fits, 100).rateConstant).toBeCloseTo(line.k! / line.c0!, 12);
    expect(startingValues(2, fits, 100).rateConstant).toBeCloseTo(line.k! / line.c0! ** 2, 12);
  });

  it('a non-positive intercept falls back to the largest value for C0', () => {
    const fits = linearisedFits([0, 1, 2], [-1, 0.5, 2]);
    expect(startingValues(0, fits, 2).initialValue).toBe(2);
  });
});
