/**
 * Speed of the `fit` command as a user runs it (issue 16): whole processes of
 * `node scripts/run-cli.mjs fit --json …` (what `npm run fit` runs: the bundle dist/cli/fit.cjs,
 * one compiled JavaScript file, no TypeScript loader; npm's own start-up is not counted), side by side with the alternative a statistician would pick on the same
 * series — a Python script (written by this bench into its temporary folder) that fits the zero-,
 * first- and second-order laws to each series by nonlinear least squares with
 * `scipy.optimize.curve_fit` and keeps the law of least AICc.
 *
 * Data: simulated stability series of an invented product ("Quorvadine 5 mg tablets", batches
 * QV-…): 12 points every 2 months, first-order loss with k 0.01–0.1 /month, Gaussian noise SD 0.5,
 * at 25, 30 or 40 °C, from a seeded generator, so every run sees the same numbers. One CSV for 1
 * series and one for each large count.
 *
 * Figures, each the median of `RUNS` runs (`STARTUP_RUNS` for the 1-series runs; wall clock; the
 * CPU time of the child, from /proc/self/stat, is printed beside it as a check against a busy
 * machine):
 * - per-series cost = (t_N − t_1) / (N − 1) for `fit` and for the scipy script, so start-up cancels;
 *   PASS when `fit`'s is at least 5× cheaper than scipy's in the same run (its anchor);
 * - start-up: the wall time of the 1-series `fit` run, PASS under 300 ms (scipy's 1-series run
 *   beside it);
 * - 10,000 series × 12 points through `fit` with a temperature column, a lower limit and a storage
 *   temperature (so the data-set work runs: Arrhenius, the Q1E conditions, the shelf life per
 *   series in the document), PASS under 2 s; the per-series cost at 3,240 series of the same
 *   command is printed beside it, to show whether the work grows linearly.
 *
 * When python3 with scipy is missing, the bench installs Debian's python3-scipy if it runs as root,
 * and otherwise prints SKIP for the comparison (the product itself never needs Python).
 * Exits 1 when a target is missed.
 *
 * Usage: `npm run bench` (all benchmarks) or `npx tsx tests/bench/fit-speed.ts`.
 */
import { spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdtempSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

const RUNS = 3;
/** The 1-series runs: the start-up figure, and what each per-series cost subtracts. */
const STARTUP_RUNS = 5;
const POINTS_PER_SERIES = 12;
const LARGE_COUNTS = [3_240, 10_000] as const;
const LINEAR_COUNT = 10_000;
const TARGET_FACTOR = 5;
const TARGET_STARTUP_MS = 300;
const TARGET_LINEAR_MS = 2_000;
const SEED = 20_261_204;

const root = path.resolve(import.meta.dirname, '..', '..');
const folder = mkdtempSync(path.join(tmpdir(), 'rateledger-fit-speed-'));
process.on('exit', () => rmSync(folder, { recursive: true, force: true }));

/** Mulberry32 uniform deviates (T. Ettinger, public domain), Box–Muller normal deviates. */
function normalGenerator(seed: number): () => number {
  let state = seed >>> 0;
  const uniform = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
  return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
}

function writeSeries(count: number): string {
  const normal = normalGenerator(SEED);
  const lines = ['Batch,Temperature (°C),Month,Assay (%)'];
  for (let index = 0; index < count; index += 1) {
    const k = 0.01 + 0.09 * ((index % 97) / 97);
    const temperature = [25, 30, 40][index % 3];
    const batch = `QV-${String(index + 1).padStart(5, '0')}`;
    for (let step = 0; step < POINTS_PER_SERIES; step += 1) {
      const month = 2 * step;
      const assay = 100 * Math.exp(-k * month) + 0.5 * normal();
      lines.push(`${batch},${temperature},${month},${assay.toFixed(3)}`);
    }
  }
  const file = path.join(folder, `quorvadine-${count}.csv`);
  writeFileSync(file, `${lines.join('\n')}\n`);
  return file;
}

/** The reference: three laws by NLS (scipy.optimize.curve_fit) per series, the least AICc chosen. */
const SCIPY_SCRIPT = `import csv, json, math, sys
import numpy as np
from scipy.optimize import curve_fit

def zero(t, c0, k): return c0 - k * t
def first(t, c0, k): return c0 * np.exp(-k * t)
def second(t, c0, k): return c0 / (1.0 + c0 * k * t)
LAWS = (('0', zero), ('1', first), ('2', second))

def main(path):
    groups = {}
    with open(path, newline='', encoding='utf-8') as handle:
        rows = csv.reader(handle)
        next(rows)
        for row in rows:
            times, values = groups.setdefault((row[0], row[1]), ([], []))
            times.append(float(row[2]))
            values.append(float(row[3]))
    out = []
    for (batch, temperature), (times, values) in groups.items():
        t = np.asarray(times)
        c = np.asarray(values)
        n = len(t)
        p = 3  # c0, k and the residual variance
        slope = np.polyfit(t, c, 1)[0]
        start = max(c[0], 1e-12)
        guesses = {'0': max(-slope, 1e-6), '1': max(-slope / start, 1e-6), '2': max(-slope / start / start, 1e-9)}
        models = []
        best = None
        for order, law in LAWS:
            try:
                estimate, covariance = curve_fit(law, t, c, p0=(c[0], guesses[order]), maxfev=2000)
                rss = float(np.sum((c - law(t, *estimate)) ** 2))
                aicc = n * math.log(rss / n) + 2 * p + 2 * p * (p + 1) / (n - p - 1)
                se = np.sqrt(np.diag(covariance))
                models.append({'order': order, 'c0': float(estimate[0]), 'k': float(estimate[1]),
                               'kSe': float(se[1]), 'aicc': aicc})
                if best is None or aicc < best[1]:
                    best = (order, aicc)
            except Exception as error:
                models.append({'order': order, 'error': str(error)})
        out.append({'id': batch, 'temperatureC': float(temperature),
                    'selectedOrder': best[0] if best else None, 'models': models})
    json.dump(out, sys.stdout, indent=2)
    sys.stdout.write('\\n')

main(sys.argv[1])
`;

/** CPU seconds (user + system) of the children this process has waited for, from /proc/self/stat. */
function childrenCpuMs(): number | null {
  try {
    const stat = readFileSync('/proc/self/stat', 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    // Fields 16 and 17 of stat(5) (cutime, cstime), counted from 3 after the command name; ticks of 10 ms.
    return (Number(fields[13]) + Number(fields[14])) * 10;
  } catch {
    return null;
  }
}

interface Run {
  wallMs: number;
  cpuMs: number | null;
}

/** Runs a command with its output to a file (not a pipe this process must drain), timed. */
function timed(command: string, args: string[]): Run {
  const outFile = path.join(folder, 'out.json');
  const out = openSync(outFile, 'w');
  const cpuBefore = childrenCpuMs();
  const start = performance.now();
  const run = spawnSync(command, args, { cwd: root, stdio: ['ignore', out, 'pipe'], encoding: 'utf8' });
  const wallMs = performance.now() - start;
  const cpuAfter = childrenCpuMs();
  closeSync(out);
  if (run.status !== 0) {
    throw new Error(`${command} ${args.join(' ')} exited with ${run.status ?? run.signal}: ${run.stderr}`);
  }
  return { wallMs, cpuMs: cpuBefore === null || cpuAfter === null ? null : cpuAfter - cpuBefore };
}

const median = (values: number[]) =>
  [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] as number;

interface Timing {
  wallMs: number;
  cpuMs: number | null;
  runs: number[];
}

function medianOf(runs: Run[]): Timing {
  const cpu = runs.map((run) => run.cpuMs);
  return {
    wallMs: median(runs.map((run) => run.wallMs)),
    cpuMs: cpu.every((value) => value !== null) ? median(cpu as number[]) : null,
    runs: runs.map((run) => run.wallMs),
  };
}

/** Rebuilds dist/cli/ when a source is newer, outside any timing (others may edit sources meanwhile). */
function ensureBuild() {
  const run = spawnSync(process.execPath, ['scripts/build-cli.mjs', '--if-stale'], {
    cwd: root,
    stdio: 'inherit',
  });
  if (run.status !== 0) throw new Error('the command-line build failed');
}

/** The per-series work only, as the scipy script does it: one series per batch, no data-set figures. */
const PLAIN = ['--time', 'Month', '--value', 'Assay (%)', '--series', 'Batch'];
const DATASET = [
  ...PLAIN,
  '--temperature',
  'Temperature (°C)',
  '--lower-limit',
  '95',
  '--storage-temperature',
  '25',
];

function fitTiming(file: string, options: string[], count = RUNS): Timing {
  const runs: Run[] = [];
  for (let run = 0; run < count; run += 1) {
    ensureBuild();
    runs.push(timed(process.execPath, ['scripts/run-cli.mjs', 'fit', '--json', ...options, file]));
  }
  return medianOf(runs);
}

function scipyTiming(script: string, file: string, count = RUNS): Timing {
  const runs: Run[] = [];
  for (let run = 0; run < count; run += 1) runs.push(timed('python3', [script, file]));
  return medianOf(runs);
}

function scipyAvailable(): boolean {
  const probe = () =>
    spawnSync('python3', ['-c', 'import numpy, scipy.optimize'], { stdio: 'ignore' }).status === 0;
  if (probe()) return true;
  if (process.getuid?.() !== 0 || !existsSync('/usr/bin/apt-get')) return false;
  console.log('python3-scipy is missing: installing it from Debian (apt-get install -y python3-scipy)');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  spawnSync('apt-get', ['install', '-y', '-qq', '--no-install-recommends', 'python3-scipy'], {
    stdio: 'inherit',
    env,
  });
  return probe();
}

const ms = (value: number) => `${value.toFixed(0)} ms`;
const cpu = (timing: Timing) => (timing.cpuMs === null ? '' : `, CPU ${timing.cpuMs.toFixed(0)} ms`);
const perSeries = (large: Timing, one: Timing, count: number) => (large.wallMs - one.wallMs) / (count - 1);
/** The same from CPU times, which a busy machine inflates less (empty when /proc is not there). */
const cpuPerSeries = (large: Timing, one: Timing, count: number) =>
  large.cpuMs === null || one.cpuMs === null
    ? ''
    : `${((large.cpuMs - one.cpuMs) / (count - 1)).toFixed(3)} ms`;

const files = new Map<number, string>([[1, writeSeries(1)]]);
for (const count of LARGE_COUNTS) files.set(count, writeSeries(count));
const fileOf = (count: number) => files.get(count) as string;

const results: boolean[] = [];
const fitOne = fitTiming(fileOf(1), PLAIN, STARTUP_RUNS);
const withScipy = scipyAvailable();
const script = path.join(folder, 'three-laws-aicc.py');
writeFileSync(script, SCIPY_SCRIPT);
const scipyOne = withScipy ? scipyTiming(script, fileOf(1), STARTUP_RUNS) : null;

for (const count of LARGE_COUNTS) {
  const fit = fitTiming(fileOf(count), PLAIN);
  const fitCost = perSeries(fit, fitOne, count);
  const line = `${count.toLocaleString('en')} series × ${POINTS_PER_SERIES} points, fit --json per series`;
  if (!scipyOne) {
    console.log(
      `SKIP  ${line}: ${fitCost.toFixed(3)} ms (fit ${ms(fit.wallMs)}${cpu(fit)}; 1 series ${ms(fitOne.wallMs)}); python3 with scipy is not installed (apt-get install python3-scipy), so there is no anchor`,
    );
    continue;
  }
  const scipy = scipyTiming(script, fileOf(count));
  const scipyCost = perSeries(scipy, scipyOne, count);
  const factor = scipyCost / fitCost;
  const pass = fitCost > 0 && factor >= TARGET_FACTOR;
  results.push(pass);
  console.log(
    `${pass ? 'PASS' : 'FAIL'}  ${line}: ${fitCost.toFixed(3)} ms against scipy NLS + AICc ${scipyCost.toFixed(3)} ms → ${factor.toFixed(2)}× cheaper (target ≥ ${TARGET_FACTOR}×; CPU per series ${cpuPerSeries(fit, fitOne, count)} against ${cpuPerSeries(scipy, scipyOne, count)}; fit ${ms(fit.wallMs)}${cpu(fit)}, scipy ${ms(scipy.wallMs)}${cpu(scipy)}, medians of ${RUNS})`,
  );
}

const startupPass = fitOne.wallMs < TARGET_STARTUP_MS;
results.push(startupPass);
console.log(
  `${startupPass ? 'PASS' : 'FAIL'}  start-up, fit --json on 1 series (the bundle dist/cli/fit.cjs): ${ms(fitOne.wallMs)} (target < ${TARGET_STARTUP_MS} ms, median of ${STARTUP_RUNS}; runs ${fitOne.runs.map(ms).join(', ')}${cpu(fitOne)}); scipy script on 1 series ${scipyOne ? ms(scipyOne.wallMs) : 'not run'}`,
);

const datasetOne = fitTiming(fileOf(1), DATASET, STARTUP_RUNS);
const datasetMid = fitTiming(fileOf(LARGE_COUNTS[0]), DATASET);
const datasetLarge = fitTiming(fileOf(LINEAR_COUNT), DATASET);
const linearPass = datasetLarge.wallMs < TARGET_LINEAR_MS;
results.push(linearPass);
console.log(
  `${linearPass ? 'PASS' : 'FAIL'}  ${LINEAR_COUNT.toLocaleString('en')} series × ${POINTS_PER_SERIES} points through fit --json with temperatures, a limit and a storage temperature: ${ms(datasetLarge.wallMs)} (target < ${TARGET_LINEAR_MS} ms; runs ${datasetLarge.runs.map(ms).join(', ')}${cpu(datasetLarge)}); per series ${perSeries(datasetLarge, datasetOne, LINEAR_COUNT).toFixed(3)} ms against ${perSeries(datasetMid, datasetOne, LARGE_COUNTS[0]).toFixed(3)} ms at ${LARGE_COUNTS[0].toLocaleString('en')} series (equal when linear)`,
);

process.exit(results.every(Boolean) ? 0 : 1);
