/**
 * Speed of the kinetics engine on two workloads a lab meets:
 * 1. a stability programme: 1,000 series of 12 points each, analysed as one data set
 *    (`analyseDataset`: every series, order decision, intervals) — target under 0.5 s on one core;
 * 2. a spectrophotometer run logging every 0.1 s: one series of 100,000 points
 *    (`analyseSeries`) — target under 0.5 s.
 * Each workload runs once to warm up, then `RUNS` times; the median is compared with the target.
 * Data are simulated first-order losses with Gaussian noise from a seeded generator
 * (`shared/kinetics/numeric/benchmark-series.ts`, shared with the solver-agreement test and
 * `nist-digits.ts`), so every run sees the same numbers. Exits 1 when a target is missed.
 *
 * Usage: `npm run bench` (all benchmarks) or `npx tsx tests/bench/kinetics-speed.ts`.
 */
import { analyseDataset } from '../../shared/kinetics/analyse-dataset.ts';
import { analyseSeries } from '../../shared/kinetics/analyse-series.ts';
import { spectrophotometerRun, stabilityProgramme } from '../../shared/kinetics/numeric/benchmark-series.ts';

const RUNS = 5;
const MANY_SERIES = 1_000;
const POINTS_PER_SERIES = 12;
const LONG_SERIES_POINTS = 100_000;
const TARGET_MANY_SERIES_MS = 500;
const TARGET_LONG_SERIES_MS = 500;

interface Timing {
  median: number;
  runs: number[];
  /** Median CPU time of this process (user + system), which other load on a shared machine inflates less. */
  cpuMedian: number;
}

function medianMilliseconds(task: () => unknown): Timing {
  task();
  const runs: number[] = [];
  const cpu: number[] = [];
  for (let run = 0; run < RUNS; run += 1) {
    const start = performance.now();
    const cpuStart = process.cpuUsage();
    task();
    const used = process.cpuUsage(cpuStart);
    runs.push(performance.now() - start);
    cpu.push((used.user + used.system) / 1000);
  }
  const median = (values: number[]) =>
    [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] as number;
  return { median: median(runs), runs, cpuMedian: median(cpu) };
}

function report(name: string, target: number, timing: Timing): boolean {
  const pass = timing.median < target;
  const runs = timing.runs.map((run) => run.toFixed(0)).join(', ');
  console.log(
    `${pass ? 'PASS' : 'FAIL'}  ${name}: median ${timing.median.toFixed(1)} ms (target < ${target} ms; runs ${runs}; CPU median ${timing.cpuMedian.toFixed(0)} ms)`,
  );
  return pass;
}

const programme = stabilityProgramme(MANY_SERIES, POINTS_PER_SERIES);
const run = spectrophotometerRun(LONG_SERIES_POINTS);
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
