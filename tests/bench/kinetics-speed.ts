/**
 * Speed of the kinetics engine on two workloads a lab meets:
 * 1. a stability programme: 1,000 series of 12 points each, analysed as one data set
 *    (`analyseDataset`: every series, order decision, intervals) — target under 1 s on one core;
 * 2. a spectrophotometer run logging every 0.1 s: one series of 100,000 points
 *    (`analyseSeries`) — target under 0.5 s.
 * Each workload runs once to warm up, then `RUNS` times; the median is compared with the target.
 * Data are simulated first-order losses with Gaussian noise from a seeded generator, so every run
 * sees the same numbers. Exits 1 when a target is missed.
 *
 * Usage: `npm run bench` (all benchmarks) or `npx tsx tests/bench/kinetics-speed.ts`.
 */
import { analyseDataset } from '../../shared/kinetics/analyse-dataset.ts';
import { analyseSeries } from '../../shared/kinetics/analyse-series.ts';
import type { Series } from '../../shared/kinetics/types.ts';

const RUNS = 5;
const MANY_SERIES = 1_000;
const POINTS_PER_SERIES = 12;
const LONG_SERIES_POINTS = 100_000;
const TARGET_MANY_SERIES_MS = 1_000;
const TARGET_LONG_SERIES_MS = 500;

/** Mulberry32: a small seeded uniform generator (public domain, T. Ettinger). */
function uniformGenerator(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

/** Standard normal deviates by the Box–Muller transform. */
function normalGenerator(seed: number): () => number {
  const uniform = uniformGenerator(seed);
  return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
}

function stabilityProgramme(): Series[] {
  const normal = normalGenerator(20_240_611);
  return Array.from({ length: MANY_SERIES }, (_, index) => {
    const k = 0.01 + 0.09 * ((index % 97) / 97);
    const observations = Array.from({ length: POINTS_PER_SERIES }, (__, step) => {
      const time = step * 2;
      return { time, value: 100 * Math.exp(-k * time) + 0.5 * normal() };
    });
    return {
      id: `lot-${index}`,
      observations,
      timeUnit: 'month',
      valueUnit: '%',
      temperatureC: 25 + 5 * (index % 4),
    };
  });
}

function spectrophotometerRun(): Series {
  const normal = normalGenerator(7);
  const observations = Array.from({ length: LONG_SERIES_POINTS }, (_, index) => {
    const time = index * 0.1;
    return { time, value: 1.2 * Math.exp(-2e-4 * time) + 0.002 * normal() };
  });
  return { id: 'cuvette-1', observations, timeUnit: 's', valueUnit: 'AU' };
}

function medianMilliseconds(task: () => unknown): { median: number; runs: number[] } {
  task();
  const runs: number[] = [];
  for (let run = 0; run < RUNS; run += 1) {
    const start = performance.now();
    task();
    runs.push(performance.now() - start);
  }
  const sorted = [...runs].sort((a, b) => a - b);
  return { median: sorted[Math.floor(sorted.length / 2)] as number, runs };
}

function report(name: string, target: number, timing: { median: number; runs: number[] }): boolean {
  const pass = timing.median < target;
  const runs = timing.runs.map((run) => run.toFixed(0)).join(', ');
  console.log(
    `${pass ? 'PASS' : 'FAIL'}  ${name}: median ${timing.median.toFixed(1)} ms (target < ${target} ms; runs ${runs})`,
  );
  return pass;
}

const programme = stabilityProgramme();
const run = spectrophotometerRun();
const results = [
  report(
    `${MANY_SERIES} series × ${POINTS_PER_SERIES} points, analyseDataset`,
    TARGET_MANY_SERIES_MS,
    medianMilliseconds(() => analyseDataset(programme)),
  ),
  report(
    `1 series × ${LONG_SERIES_POINTS.toLocaleString('en')} points, analyseSeries`,
    TARGET_LONG_SERIES_MS,
    medianMilliseconds(() => analyseSeries(run)),
  ),
];
process.exit(results.every(Boolean) ? 0 : 1);
