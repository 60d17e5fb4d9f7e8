/**
 * Test and benchmark support (not part of the engine): the simulated degradation series the
 * benchmarks run on, from one seeded generator, so that `tests/bench/kinetics-speed.ts`, the
 * solver-agreement test (`order/rate-law-solver-agreement.test.ts`) and the agreement digits
 * printed by `tests/bench/nist-digits.ts` all see the same numbers on every run.
 *
 * Three sets:
 * - `stabilityProgramme()`: 1,000 lots × 12 monthly points of first-order loss with Gaussian noise
 *   (the speed benchmark's stability workload);
 * - `spectrophotometerRun()`: one first-order series of 100,000 points (its long-series workload);
 * - `solverAgreementSeries()`: 360 series that cover what a fit meets — true order 0, 0.5, 1, 1.5
 *   and 2, from 5 % to 90 % conversion, constant or proportional noise at two levels, 8, 12 or
 *   24 points — for checking the rate-law solver against the NIST-checked one.
 *
 * Generator: Mulberry32 uniform deviates (T. Ettinger, public domain) turned into standard normal
 * deviates by the Box–Muller transform (G. E. P. Box & M. E. Muller, Ann. Math. Statist. 29 (1958)
 * 610–611).
 *
 * Throws nothing. Example: `normalGenerator(7)()` gives the same number on every run.
 */
import { prepareRateLaw, rateLawAt } from '../order/integrated-rate-law.ts';
import type { Series } from '../types.ts';

/** Mulberry32: a small seeded uniform generator on [0, 1). */
export function uniformGenerator(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

/** Standard normal deviates by the Box–Muller transform of `uniformGenerator(seed)`. */
export function normalGenerator(seed: number): () => number {
  const uniform = uniformGenerator(seed);
  return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
}

/** Seeds: fixed, so every run sees the same series. */
const STABILITY_PROGRAMME_SEED = 20_240_611;
const SPECTROPHOTOMETER_SEED = 7;
const SOLVER_AGREEMENT_SEED = 20_250_101;

/** `count` lots of `pointsPerSeries` points every 2 months: first-order loss, k 0.01–0.1 /month, SD 0.5. */
export function stabilityProgramme(count = 1_000, pointsPerSeries = 12): Series[] {
  const normal = normalGenerator(STABILITY_PROGRAMME_SEED);
  return Array.from({ length: count }, (_, index) => {
    const k = 0.01 + 0.09 * ((index % 97) / 97);
    const observations = Array.from({ length: pointsPerSeries }, (__, step) => {
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

/** One absorbance reading every 0.1 s: first-order loss, k 2e-4 /s, SD 0.002 AU. */
export function spectrophotometerRun(points = 100_000): Series {
  const normal = normalGenerator(SPECTROPHOTOMETER_SEED);
  const observations = Array.from({ length: points }, (_, index) => {
    const time = index * 0.1;
    return { time, value: 1.2 * Math.exp(-2e-4 * time) + 0.002 * normal() };
  });
  return { id: 'cuvette-1', observations, timeUnit: 's', valueUnit: 'AU' };
}

/** True orders of the simulated laws: the three integer orders and two a free-order fit must find. */
export const AGREEMENT_TRUE_ORDERS = [0, 0.5, 1, 1.5, 2] as const;
/** Fraction of the initial value that has reacted at the last time. */
export const AGREEMENT_CONVERSIONS = [0.05, 0.15, 0.3, 0.5, 0.7, 0.9] as const;
/** Noise: constant SD in % of the initial value, or proportional (CV). */
const AGREEMENT_NOISE = [
  { kind: 'constant', size: 0.2 },
  { kind: 'constant', size: 1 },
  { kind: 'proportional', size: 0.005 },
  { kind: 'proportional', size: 0.02 },
] as const;
const AGREEMENT_POINT_COUNTS = [8, 12, 24] as const;
const AGREEMENT_INITIAL_VALUE = 100;
const AGREEMENT_TIME_SPAN = 24;

/**
 * 5 true orders × 6 conversions × 4 noise models × 3 point counts = 360 series over 24 months,
 * C0 = 100 %. The rate constant is set so that the law reaches the stated conversion at 24 months:
 * k = (C0 − C)/t (order 0), ln(C0/C)/t (order 1), (C^(1−n) − C0^(1−n))/((n − 1)·t) otherwise.
 */
export function solverAgreementSeries(): Series[] {
  const normal = normalGenerator(SOLVER_AGREEMENT_SEED);
  const series: Series[] = [];
  for (const order of AGREEMENT_TRUE_ORDERS) {
    for (const conversion of AGREEMENT_CONVERSIONS) {
      for (const noise of AGREEMENT_NOISE) {
        for (const pointCount of AGREEMENT_POINT_COUNTS) {
          const law = prepareRateLaw(
            Number.isInteger(order) ? (order as 0 | 1 | 2) : 'n',
            AGREEMENT_INITIAL_VALUE,
            rateConstantFor(order, conversion),
            order,
          );
          const observations = Array.from({ length: pointCount }, (_, step) => {
            const time = (step * AGREEMENT_TIME_SPAN) / (pointCount - 1);
            const value = rateLawAt(law, time, null);
            const deviation =
              noise.kind === 'constant'
                ? (noise.size * AGREEMENT_INITIAL_VALUE * normal()) / 100
                : noise.size * value * normal();
            return { time, value: value + deviation };
          });
          series.push({
            id: `n${order}-conversion${conversion * 100}-${noise.kind}${noise.size}-points${pointCount}`,
            observations,
            timeUnit: 'month',
            valueUnit: '%',
          });
        }
      }
    }
  }
  return series;
}

function rateConstantFor(order: number, conversion: number): number {
  const initial = AGREEMENT_INITIAL_VALUE;
  const final = initial * (1 - conversion);
  if (order === 0) return (initial - final) / AGREEMENT_TIME_SPAN;
  if (order === 1) return Math.log(initial / final) / AGREEMENT_TIME_SPAN;
  return (final ** (1 - order) - initial ** (1 - order)) / ((order - 1) * AGREEMENT_TIME_SPAN);
}
