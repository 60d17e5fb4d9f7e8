import { describe, expect, it } from 'vitest';
import { analyseSeries } from '../analyse-series.ts';
import type { IntegerOrder } from '../types.ts';
import { fitRateLaw } from './fit-rate-law.ts';
import { linearisedFits } from './linearised-fits.ts';
import { startingValues } from './starting-values.ts';

/**
 * Seeded Monte-Carlo study of the order decision and of the rate-constant interval.
 *
 * Design (known truth): series of order 0, 1 and 2 (−dC/dt = k·Cⁿ, C0 = 100) sampled at N equally spaced
 * times over 12 months, with k set so that 10, 30, 60, 80 or 95 % has reacted at the last time, and Gaussian
 * noise of 0.5, 1 or 2 % of C0 added (mulberry32 uniform generator, Box–Muller normal deviates). N = 6, 8, 12.
 * 135 cells × 60 series = 8100 series. Each is analysed with the default options (error model chosen from
 * the data, 95 % intervals).
 *
 * Targets (asserted):
 * 1. where at least 60 % has reacted AND the cell is decidable (below), the named order is right in ≥ 99 % of
 *    series (an abstention counts as not right);
 * 2. over all series, a confidently wrong order (a named order that is not the true one) in ≤ 1 %;
 * 3. the 95 % interval of k under the true order's law covers the true k in 93–97 % of all series.
 *
 * Decidable cell: not every ≥ 60 % cell carries the information to name an order. The information is measured
 * before any noise is drawn, by the separation λ = min over the wrong integer laws of RSS(best fit of that law
 * to the noise-free curve)/σ² — the non-centrality of the misfit. The decision needs (N − 2)·ln(RSS ratio) ≥ 7.5, i.e. ΔAICc ≥ 11.25 with N = 6 (engine 0.3.0; the
 * figures below were derived for the former ΔAICc ≥ 10 and are a slight understatement now); with N = 6
 * (4 residual df), ΔAICc ≈ N·ln(1 + λ′/RSS₀) with RSS₀ ~ σ²χ²₄ and λ′ ≈ λ ± 2√λ, and passing 10 in ≥ 99 % of
 * series needs λ of about 100 (taking the 99th percentiles of χ²₄, 13.3, and of λ′ at once gives 105, an
 * overstatement because both rarely happen together). So cells with λ < 100 — in this grid 1 % noise at
 * 60 % reacted, 2 % noise at 60–80 % reacted, and 2 % noise at 95 % with 6–8 points — lack the information
 * to name an order with 99 % reliability and are excluded from
 * target 1 (they still count in targets 2 and 3); abstaining there is the correct behaviour. The measured
 * figures of those cells are printed as well.
 */

const C0 = 100;
const SPAN = 12;
const SERIES_PER_CELL = 60;
const DECIDABLE_SEPARATION = 100;
const ORDERS: readonly IntegerOrder[] = [0, 1, 2];
const FRACTIONS = [0.1, 0.3, 0.6, 0.8, 0.95];
const NOISE = [0.005, 0.01, 0.02];
const POINTS = [6, 8, 12];

function mulberry32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function rateConstantFor(order: IntegerOrder, fraction: number): number {
  if (order === 0) return (fraction * C0) / SPAN;
  if (order === 1) return -Math.log(1 - fraction) / SPAN;
  return (1 / ((1 - fraction) * C0) - 1 / C0) / SPAN;
}

function truth(order: IntegerOrder, k: number, t: number): number {
  if (order === 0) return C0 - k * t;
  if (order === 1) return C0 * Math.exp(-k * t);
  return C0 / (1 + k * C0 * t);
}

/** λ: smallest noise-free misfit of a wrong integer law, in units of the noise variance. */
function separation(order: IntegerOrder, times: number[], curve: number[], sd: number): number {
  const linearised = linearisedFits(times, curve);
  let smallest = Number.POSITIVE_INFINITY;
  for (const wrong of ORDERS) {
    if (wrong === order) continue;
    const fit = fitRateLaw(wrong, times, curve, 'constant', startingValues(wrong, linearised, C0));
    smallest = Math.min(smallest, fit.residualSumOfSquares / (sd * sd));
  }
  return smallest;
}

describe('order selection and k interval: seeded Monte-Carlo study', () => {
  it('meets the decisiveness, wrong-order and coverage targets', () => {
    const uniform = mulberry32(20_261_201);
    const normal = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
    const started = performance.now();
    let total = 0;
    let confidentlyWrong = 0;
    let covered = 0;
    let proportionalChosen = 0;
    let decidableSeries = 0;
    let decidableRight = 0;
    let highConversionSeries = 0;
    let highConversionRight = 0;
    const undecidableCells: string[] = [];
    for (const order of ORDERS) {
      for (const fraction of FRACTIONS) {
        for (const noise of NOISE) {
          for (const pointCount of POINTS) {
            const k = rateConstantFor(order, fraction);
            const sd = noise * C0;
            const times = Array.from({ length: pointCount }, (_, i) => (i * SPAN) / (pointCount - 1));
            const curve = times.map((t) => truth(order, k, t));
            const lambda = separation(order, times, curve, sd);
            const decidable = fraction >= 0.6 && lambda >= DECIDABLE_SEPARATION;
            let right = 0;
            for (let replicate = 0; replicate < SERIES_PER_CELL; replicate++) {
              const analysis = analyseSeries({
                id: `MC-${order}-${fraction}-${noise}-${pointCount}-${replicate}`,
                timeUnit: 'month',
                valueUnit: '% label claim',
                observations: times.map((time, i) => ({ time, value: curve[i]! + sd * normal() })),
              });
              total++;
              if (analysis.selectedOrder === order) right++;
              else if (analysis.selectedOrder !== null) confidentlyWrong++;
              const interval = analysis.models[order]!.kCi95;
              if (interval !== null && interval[0] <= k && k <= interval[1]) covered++;
              if (analysis.errorModel === 'proportional') proportionalChosen++;
            }
            if (decidable) {
              decidableSeries += SERIES_PER_CELL;
              decidableRight += right;
            }
            if (fraction >= 0.6) {
              highConversionSeries += SERIES_PER_CELL;
              highConversionRight += right;
              if (!decidable) {
                undecidableCells.push(
                  `order ${order}, ${fraction * 100} % reacted, noise ${noise * 100} %, N = ${pointCount}: λ = ${lambda.toFixed(1)}, right ${right}/${SERIES_PER_CELL}`,
                );
              }
            }
          }
        }
      }
    }
    const elapsed = (performance.now() - started) / 1000;
    const decidableRate = decidableRight / decidableSeries;
    const wrongRate = confidentlyWrong / total;
    const coverage = covered / total;
    console.log(
      [
        `Monte-Carlo order study: ${total} series in ${elapsed.toFixed(1)} s`,
        `≥ 60 % reacted, decidable cells (λ ≥ ${DECIDABLE_SEPARATION}): right ${decidableRight}/${decidableSeries} = ${(100 * decidableRate).toFixed(2)} %`,
        `≥ 60 % reacted, all cells: right ${highConversionRight}/${highConversionSeries} = ${((100 * highConversionRight) / highConversionSeries).toFixed(2)} %`,
        `confidently wrong order over all series: ${confidentlyWrong}/${total} = ${(100 * wrongRate).toFixed(2)} %`,
        `95 % interval of k (true order's law) covers true k: ${covered}/${total} = ${(100 * coverage).toFixed(2)} %`,
        `proportional error model chosen in ${proportionalChosen}/${total} series (the noise is constant)`,
        `undecidable ≥ 60 % cells (excluded from the 99 % target):`,
        ...undecidableCells.map((cell) => `  ${cell}`),
      ].join('\n'),
    );
    expect(decidableRate).toBeGreaterThanOrEqual(0.99);
    expect(wrongRate).toBeLessThanOrEqual(0.01);
    expect(coverage).toBeGreaterThanOrEqual(0.93);
    expect(coverage).toBeLessThanOrEqual(0.97);
  }, 60_000);
});
