import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { poolability } from './poolability.ts';
import { lineBatch, referenceLine } from './q1e-test-fixtures.ts';
import type { StabilityBatch } from './stability-batch.ts';

/** Relative tolerance for sums of squares computed two ways in double precision. */
const SAME_COMPUTATION = 1e-9;
const relative = (actual: number, expected: number): number =>
  Math.abs(actual - expected) / Math.abs(expected);

/**
 * Independent ANCOVA sums of squares: per-batch fits by simple-statistics `linearRegression`
 * (separate lines), the within-batch common slope Σ Sxy / Σ Sxx (textbook ANCOVA, e.g. Snedecor &
 * Cochran, "Statistical Methods", analysis of covariance), and one fit to all data (single line).
 */
function referenceSums(batches: StabilityBatch[]) {
  const perBatch = batches.map((batch) => {
    const times = batch.observations.map((o) => o.time);
    const values = batch.observations.map((o) => o.value);
    const line = referenceLine(times, values);
    const meanValue = values.reduce((s, v) => s + v, 0) / values.length;
    const sxy = times.reduce((s, t, i) => s + (t - line.meanTime) * ((values[i] ?? 0) - meanValue), 0);
    const syy = values.reduce((s, v) => s + (v - meanValue) ** 2, 0);
    return { ...line, sxy, syy };
  });
  const separate = perBatch.reduce((s, b) => s + b.rss, 0);
  const sumSxy = perBatch.reduce((s, b) => s + b.sxy, 0);
  const sumSxx = perBatch.reduce((s, b) => s + b.sxx, 0);
  const commonSlope = perBatch.reduce((s, b) => s + b.syy, 0) - sumSxy ** 2 / sumSxx;
  const all = batches.flatMap((b) => b.observations);
  const single = referenceLine(
    all.map((o) => o.time),
    all.map((o) => o.value),
  ).rss;
  return { separate, commonSlope, single, n: all.length, batches: batches.length };
}

describe('poolability (ICH Q1E App. B.2 ANCOVA at 0.25)', () => {
  it('pools batches that follow one line, with F and p matching an independent computation', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2102', 100.2, -0.3, 1),
      lineBatch('CV-2103', 100.2, -0.3, 2),
    ];
    const result = poolability(batches);
    const sums = referenceSums(batches);
    const { n, batches: b } = sums;
    expect(relative(result.slopeTest.residualSumOfSquaresFull, sums.separate)).toBeLessThan(SAME_COMPUTATION);
    expect(relative(result.slopeTest.residualSumOfSquaresReduced, sums.commonSlope)).toBeLessThan(
      SAME_COMPUTATION,
    );
    const slopeF = (sums.commonSlope - sums.separate) / (b - 1) / (sums.separate / (n - 2 * b));
    expect(relative(result.slopeTest.fStatistic, slopeF)).toBeLessThan(1e-8);
    expect(result.slopeTest.degreesOfFreedom).toEqual([b - 1, n - 2 * b]);
    // jStat central F distribution (reference library): p = 1 − F_cdf.
    expect(result.slopeTest.pValue).toBeCloseTo(1 - jStat.centralF.cdf(slopeF, b - 1, n - 2 * b), 7);
    const interceptF = (sums.single - sums.commonSlope) / (b - 1) / (sums.commonSlope / (n - b - 1));
    expect(relative(result.interceptTest?.fStatistic ?? 0, interceptF)).toBeLessThan(1e-8);
    expect(result.interceptTest?.pValue ?? 0).toBeCloseTo(
      1 - jStat.centralF.cdf(interceptF, b - 1, n - b - 1),
      7,
    );
    expect(result.slopeTest.pValue).toBeGreaterThanOrEqual(0.25);
    expect(result.interceptTest?.pValue ?? 0).toBeGreaterThanOrEqual(0.25);
    expect(result.decision).toBe('pooled');
    expect(JSON.parse(JSON.stringify(result))).toEqual(result);
  });

  it('keeps separate lines when one batch degrades clearly faster', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2102', 100.2, -0.3, 1),
      lineBatch('CV-2104', 100.2, -0.55, 2),
    ];
    const result = poolability(batches);
    expect(result.slopeTest.pValue).toBeLessThan(0.25);
    expect(result.decision).toBe('separate');
    expect(result.interceptTest).toBeNull();
    expect(result.interceptTestSkippedReason).not.toBeNull();
  });

  it('chooses a common slope with separate intercepts when only the start values differ', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2105', 99.2, -0.3, 1),
      lineBatch('CV-2106', 101.0, -0.3, 2),
    ];
    const result = poolability(batches);
    const sums = referenceSums(batches);
    expect(relative(result.interceptTest?.residualSumOfSquaresReduced ?? 0, sums.single)).toBeLessThan(
      SAME_COMPUTATION,
    );
    expect(result.slopeTest.pValue).toBeGreaterThanOrEqual(0.25);
    expect(result.interceptTest?.pValue ?? 1).toBeLessThan(0.25);
    expect(result.decision).toBe('common-slope');
  });

  it('uses the significance level it is given', () => {
    const batches = [
      lineBatch('CV-2101', 100.2, -0.3, 0),
      lineBatch('CV-2102', 100.2, -0.3, 1),
      lineBatch('CV-2103', 100.2, -0.3, 2),
    ];
    const strict = poolability(batches, { significance: 0.999_999 });
    expect(strict.significance).toBe(0.999_999);
    expect(strict.decision).toBe('separate');
  });

  it('is not applicable to one batch and rejects degenerate batches', () => {
    const code = (c: string) => expect.objectContaining({ code: c });
    expect(() => poolability([lineBatch('CV-2101', 100, -0.3, 0)])).toThrow(code('not-applicable'));
    const short = {
      batch: 'CV-2107',
      observations: [
        { time: 0, value: 100 },
        { time: 3, value: 99 },
      ],
    };
    expect(() => poolability([lineBatch('CV-2101', 100, -0.3, 0), short])).toThrow(code('too-few-points'));
    const oneTime = {
      batch: 'CV-2108',
      observations: [0, 0, 0].map((time, i) => ({ time, value: 100 + i })),
    };
    expect(() => poolability([lineBatch('CV-2101', 100, -0.3, 0), oneTime])).toThrow(code('single-time'));
    expect(() =>
      poolability([lineBatch('CV-2101', 100, -0.3, 0), lineBatch('CV-2101', 100, -0.3, 1)]),
    ).toThrow(code('invalid-input'));
    const exact = (name: string) => ({
      batch: name,
      observations: [0, 3, 6].map((time) => ({ time, value: 100 - time })),
    });
    expect(() => poolability([exact('CV-2109'), exact('CV-2110')])).toThrow(code('zero-variance'));
    const negative = {
      batch: 'CV-2111',
      observations: [0, 3, 6].map((time) => ({ time, value: -1 - time })),
    };
    expect(() => poolability([lineBatch('CV-2101', 100, -0.3, 0), negative], { scale: 'ln' })).toThrow(
      code('non-positive-value'),
    );
    expect(() =>
      poolability([lineBatch('CV-2101', 100, -0.3, 0), lineBatch('CV-2102', 100, -0.3, 1)], {
        significance: 0,
      }),
    ).toThrow(code('invalid-input'));
  });
});
