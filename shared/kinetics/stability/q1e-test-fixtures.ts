/**
 * Invented stability data for the Q1E tests: a fictional product ("Corvalin 20 mg tablets") and
 * fictional batches. Values are a chosen straight line plus fixed, hand-written scatter of about
 * ±0.2 % label claim, so each fixture's intended outcome follows from its construction.
 */
import { linearRegression } from 'simple-statistics';
import type { StabilityBatch } from './stability-batch.ts';

export const MONTHS = [0, 3, 6, 9, 12, 18, 24];
const SCATTER: readonly (readonly number[])[] = [
  [0.15, -0.1, 0.05, 0.12, -0.18, 0.08, -0.06],
  [-0.09, 0.14, -0.12, 0.03, 0.1, -0.15, 0.07],
  [0.04, -0.13, 0.16, -0.07, -0.02, 0.11, -0.1],
];

/** Batch `name` following intercept + slope·t plus the scatter pattern `pattern`. */
export function lineBatch(
  name: string,
  intercept: number,
  slope: number,
  pattern: number,
  times = MONTHS,
): StabilityBatch {
  const scatter = SCATTER[pattern % SCATTER.length] ?? [];
  return {
    batch: name,
    observations: times.map((time, i) => ({
      time,
      value: intercept + slope * time + (scatter[i % scatter.length] ?? 0),
    })),
  };
}

/** Ordinary least squares by simple-statistics with the textbook residual statistics (independent reference). */
export function referenceLine(times: readonly number[], values: readonly number[]) {
  const { m, b } = linearRegression(times.map((t, i) => [t, values[i] ?? 0]));
  const n = times.length;
  const meanTime = times.reduce((sum, t) => sum + t, 0) / n;
  const sxx = times.reduce((sum, t) => sum + (t - meanTime) ** 2, 0);
  const rss = times.reduce((sum, t, i) => sum + ((values[i] ?? 0) - (b + m * t)) ** 2, 0);
  return { slope: m, intercept: b, n, meanTime, sxx, rss };
}
