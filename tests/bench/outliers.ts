/**
 * Monte-Carlo benchmark of the possible-outlier flag (`shared/kinetics/order/bonferroni-outlier-test.ts`):
 * its false-alarm rate per clean series, and its detection rate of one 6σ gross error by number of
 * points and by position (middle pull, last pull).
 *
 * Design (known truth): −dC/dt = k·Cⁿ, C0 = 100, N = 5 … 15 pulls equally spaced over 24 months.
 * Each series draws its order (0, 1, 2), fraction reacted at 24 months (10, 30, 60, 90 %), noise SD
 * (0.5, 1, 2 % of C0 for constant noise, of the true value for proportional noise) and noise kind at
 * random. Clean: no gross error. Contaminated: the point at the middle pull (index ⌊N/2⌋) or the
 * last pull is moved by 6 of its own noise SDs, up or down at random. Every series goes through
 * `analyseSeries` with default options; a clean series with any flag is a false alarm, and a
 * contaminated one is detected when the moved point is flagged. The old fixed rule |tᵢ| > 3 is
 * counted on the same residuals for comparison.
 *
 * Random numbers: mulberry32 (seed `--seed`, default 20261203) and Box–Muller normal deviates.
 * Exits 1 when the false-alarm rate over all clean series exceeds 5 %.
 *
 * Usage: `npm run bench`, or `npx tsx tests/bench/outliers.ts [--seed N] [--replicates N]`.
 */
import { parseArgs } from 'node:util';
import { analyseSeries } from '../../shared/kinetics/analyse-series.ts';
import { MAX_OUTLIER_FALSE_ALARM_RATE } from '../../shared/kinetics/order/bonferroni-outlier-test.ts';
import type { SeriesAnalysis } from '../../shared/kinetics/series-analysis.ts';
import type { IntegerOrder } from '../../shared/kinetics/types.ts';

const { values: args } = parseArgs({
  options: {
    seed: { type: 'string', default: '20261203' },
    replicates: { type: 'string', default: '400' },
  },
});
const REPLICATES = Number(args.replicates);
const C0 = 100;
const SPAN = 24;
const GROSS_ERROR_SDS = 6;
const POINT_COUNTS = [5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15];
const ORDERS: readonly IntegerOrder[] = [0, 1, 2];
const FRACTIONS = [0.1, 0.3, 0.6, 0.9];
const NOISES = [0.005, 0.01, 0.02];
const OLD_THRESHOLD = 3;

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
const uniform = mulberry32(Number(args.seed));
const normal = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
const pick = <T>(items: readonly T[]): T => items[Math.floor(uniform() * items.length)]!;

function truth(order: IntegerOrder, fraction: number, t: number): number {
  if (order === 0) return C0 - ((fraction * C0) / SPAN) * t;
  if (order === 1) return C0 * Math.exp((Math.log(1 - fraction) / SPAN) * t);
  return C0 / (1 + ((1 / (1 - fraction) - 1) / SPAN) * t);
}

/** One simulated series; `spoil` is the index moved by 6σ, or null for a clean series. */
function simulate(pointCount: number, spoil: number | null): SeriesAnalysis {
  const order = pick(ORDERS);
  const fraction = pick(FRACTIONS);
  const noise = pick(NOISES);
  const proportional = uniform() < 0.5;
  const observations = Array.from({ length: pointCount }, (_, i) => {
    const time = (i * SPAN) / (pointCount - 1);
    const mean = truth(order, fraction, time);
    const sd = noise * (proportional ? mean : C0);
    const gross = i === spoil ? (uniform() < 0.5 ? -1 : 1) * GROSS_ERROR_SDS * sd : 0;
    return { time, value: mean + sd * normal() + gross };
  });
  return analyseSeries({ id: 'OUT', timeUnit: 'month', valueUnit: '% label claim', observations });
}

const flagged = (analysis: SeriesAnalysis) => analysis.diagnostics?.possibleOutliers ?? [];
const oldFlagged = (analysis: SeriesAnalysis) =>
  (analysis.diagnostics?.points ?? []).flatMap((point, index) =>
    point.externallyStudentised !== null && Math.abs(point.externallyStudentised) > OLD_THRESHOLD
      ? [index]
      : [],
  );
const percent = (part: number, whole: number) => `${((100 * part) / whole).toFixed(1)} %`.padStart(7);

const started = performance.now();
const lines = [' points  false alarms  (old |t|>3)  detected: middle  (old)      last pull  (old)'];
let clean = 0;
let falseAlarms = 0;
let oldFalseAlarms = 0;
for (const pointCount of POINT_COUNTS) {
  const row = { clean: 0, oldClean: 0, middle: 0, oldMiddle: 0, last: 0, oldLast: 0 };
  const middle = Math.floor(pointCount / 2);
  for (let replicate = 0; replicate < REPLICATES; replicate++) {
    const plain = simulate(pointCount, null);
    if (flagged(plain).length > 0) row.clean++;
    if (oldFlagged(plain).length > 0) row.oldClean++;
    const spoiledMiddle = simulate(pointCount, middle);
    if (flagged(spoiledMiddle).includes(middle)) row.middle++;
    if (oldFlagged(spoiledMiddle).includes(middle)) row.oldMiddle++;
    const spoiledLast = simulate(pointCount, pointCount - 1);
    if (flagged(spoiledLast).includes(pointCount - 1)) row.last++;
    if (oldFlagged(spoiledLast).includes(pointCount - 1)) row.oldLast++;
  }
  clean += REPLICATES;
  falseAlarms += row.clean;
  oldFalseAlarms += row.oldClean;
  lines.push(
    `${String(pointCount).padStart(7)}  ${percent(row.clean, REPLICATES)}       ${percent(row.oldClean, REPLICATES)}      ${percent(row.middle, REPLICATES)}      ${percent(row.oldMiddle, REPLICATES)}    ${percent(row.last, REPLICATES)}  ${percent(row.oldLast, REPLICATES)}`,
  );
}
const elapsed = (performance.now() - started) / 1000;
const rate = falseAlarms / clean;
const pass = rate <= MAX_OUTLIER_FALSE_ALARM_RATE;
console.log(
  [
    `Outlier flag, seed ${args.seed}: ${REPLICATES} series per row and column, ${3 * clean} series in ${elapsed.toFixed(1)} s`,
    '',
    ...lines,
    '',
    `False alarms over all ${clean} clean series: ${falseAlarms} = ${(100 * rate).toFixed(2)} % (old |t| > ${OLD_THRESHOLD}: ${(100 * (oldFalseAlarms / clean)).toFixed(2)} %); target ≤ ${MAX_OUTLIER_FALSE_ALARM_RATE * 100} %: ${pass ? 'PASS' : 'FAIL'}`,
  ].join('\n'),
);
process.exit(pass ? 0 : 1);
