import { describe, expect, it } from 'vitest';
import { confidenceBandGrid } from './confidence-band-grid.ts';
import { confidenceLimitCrossing } from './confidence-limit-crossing.ts';
import { lineMeanAt, type StabilityLine } from './stability-line.ts';
import { fromStabilityScale, toStabilityScale } from './stability-scale.ts';

const line = (overrides: Partial<StabilityLine>): StabilityLine => ({
  label: 'CV-1001',
  batches: ['CV-1001'],
  centreTime: 0,
  valueAtCentre: 100,
  slope: -0.5,
  varianceAtCentre: 0,
  covarianceCentreSlope: 0,
  varianceSlope: 0,
  degreesOfFreedom: 5,
  residualStandardDeviation: 0,
  ...overrides,
});

describe('confidenceLimitCrossing', () => {
  it('without uncertainty is the time the line itself reaches the limit', () => {
    // Straight line 100 − 0.5t reaches 90 at t = 20 exactly (algebra).
    expect(confidenceLimitCrossing(line({}), 90, 'lower', 2, 100).time).toBeCloseTo(20, 12);
    expect(confidenceLimitCrossing(line({ slope: 0.5 }), 110, 'upper', 2, 100).time).toBeCloseTo(20, 12);
  });

  it('solves the degenerate (linear) case where β² = q²·Var b', () => {
    // q = 2, Var b = 0.0625 → q²·Var b = 0.25 = β²: the quadratic term vanishes. With Var a = 1 the
    // margin is (100 − 0.5t − 90) − 2·√(1 + 0.0625t²); setting it to 0 and squaring gives
    // (10 − 0.5t)² = 4 + 0.25t² → 100 − 10t = 4 → t = 9.6 (algebra).
    const crossing = confidenceLimitCrossing(
      line({ varianceAtCentre: 1, varianceSlope: 0.0625 }),
      90,
      'lower',
      2,
      100,
    );
    expect(crossing.time).toBeCloseTo(9.6, 12);
  });

  it('finds the earliest crossing of a widening band even with a rising mean', () => {
    // Mean 100 + 0.01t, band √(0.01 + 0.01t²)·2: the lower limit still falls below 95 eventually.
    const rising = line({ slope: 0.01, varianceAtCentre: 0.01, varianceSlope: 0.01 });
    const crossing = confidenceLimitCrossing(rising, 95, 'lower', 2, 1000);
    const t = crossing.time ?? 0;
    const at = lineMeanAt(rising, t);
    expect(Math.abs(at.mean - 2 * at.standardError - 95) / 95).toBeLessThan(1e-12);
  });

  it('reports no crossing within the horizon and failure at the start', () => {
    const none = confidenceLimitCrossing(line({ slope: 0 }), 90, 'lower', 2, 50);
    expect(none.status).toBe('no-crossing-within-horizon');
    expect(none.time).toBeNull();
    expect(confidenceLimitCrossing(line({}), 90, 'lower', 2, 10).status).toBe('no-crossing-within-horizon');
    const start = confidenceLimitCrossing(line({ varianceAtCentre: 100 }), 90, 'lower', 2, 50);
    expect(start.status).toBe('fails-at-start');
    expect(start.time).toBe(0);
  });
});

describe('stability scales and the plot grid', () => {
  it('transforms and back-transforms values', () => {
    expect(toStabilityScale(90, 'ln')).toBeCloseTo(Math.log(90), 14);
    expect(toStabilityScale(90, '1/x')).toBeCloseTo(1 / 90, 14);
    expect(fromStabilityScale(Math.log(90), 'ln')).toBeCloseTo(90, 12);
    expect(fromStabilityScale(-0.1, '1/x')).toBeNull();
    expect(fromStabilityScale(1000, 'ln')).toBeNull();
    expect(() => toStabilityScale(0, '1/x')).toThrow(expect.objectContaining({ code: 'non-positive-value' }));
    expect(() => toStabilityScale(Number.NaN, 'none')).toThrow(
      expect.objectContaining({ code: 'invalid-input' }),
    );
  });

  it('draws the example band of the doc comment', () => {
    const grid = confidenceBandGrid(line({}), 'none', 2, 10, 3);
    expect(grid.map((p) => p.time)).toEqual([0, 5, 10]);
    expect(grid.map((p) => p.mean)).toEqual([100, 97.5, 95]);
    expect(grid.map((p) => p.lowerCL)).toEqual([100, 97.5, 95]);
  });

  it('gives null, not Infinity, where a reciprocal band has no value', () => {
    const reciprocal = line({ valueAtCentre: 0.01, slope: 0.0001, varianceAtCentre: 1e-4 });
    const grid = confidenceBandGrid(reciprocal, '1/x', 2, 10, 3);
    expect(grid[0]?.upperCL).toBeNull();
    expect(grid[0]?.lowerCL ?? 0).toBeGreaterThan(0);
    expect(JSON.parse(JSON.stringify(grid))).toEqual(grid);
  });
});
