import { lineMeanAt, type StabilityLine } from './stability-line.ts';

/** Numbers in sentences: four significant figures, as the figures are printed elsewhere. */
const formatNumber = (value: number): string => String(Number(value.toPrecision(4)));

/** Which confidence limit of the mean line is compared with which acceptance limit. */
export type LimitSide = 'lower' | 'upper';

/** Result of `confidenceLimitCrossing`; `time` is null unless the limit is met. */
export interface ConfidenceLimitCrossing {
  /**
   * 'crossing': the confidence limit meets the acceptance limit at `time`;
   * 'fails-at-start': it is already outside at time 0;
   * 'no-crossing-within-horizon': it stays inside up to `horizon` (never a huge number instead).
   */
  status: 'crossing' | 'fails-at-start' | 'no-crossing-within-horizon';
  time: number | null;
  horizon: number;
  reason: string;
}

/** Newton polishing steps applied to each quadratic root. */
const POLISH_STEPS = 3;
/** A quadratic coefficient below this fraction of the others is treated as zero (linear case). */
const DEGENERATE_QUADRATIC = 1e-14;

/**
 * The earliest time t in [0, horizon] at which a confidence limit of the mean regression line
 * meets an acceptance limit — the ICH Q1E shelf-life construction on the regression scale.
 *
 * Formula in words: write the margin g(t) = s·(m(t) − L) − q·se(t), with s = +1 for the lower
 * confidence limit against a lower acceptance limit and s = −1 for the upper one against an
 * upper limit, m and se from `lineMeanAt`, and q the Student t quantile. The limit is met where
 * g = 0. With u = t − c, d = s·(a − L) and β = s·b, squaring s·(m − L) = q·se gives the quadratic
 * (β² − q²·Var b)·u² + 2(d·β − q²·Cov)·u + (d² − q²·Var a) = 0; its real roots with d + β·u ≥ 0
 * are the zeros of g. They are found with the cancellation-free form of the quadratic formula,
 * polished by Newton steps on g itself, and the earliest one in (0, horizon] is returned. If
 * g(0) ≤ 0 the product is outside at the start. This is the inverse-regression construction of
 * ISO Guide 35:2017 Annex B (B.21–B.24), there with a prediction term, here with the
 * confidence-of-the-mean term ICH Q1E App. B.1 asks for.
 *
 * Reference: ICH Q1E App. B.1; ISO Guide 35:2017 Annex B; docs/methods.md#confidence-limit-crossing.
 *
 * Throws nothing; the caller passes a finite quantile ≥ 0 and a finite horizon > 0.
 *
 * Example: a = 100 at c = 0, slope −0.5, Var a = Var b = Cov = 0 (no uncertainty), lower limit
 * 90 → crossing at t = 20.
 */
export function confidenceLimitCrossing(
  line: StabilityLine,
  limit: number,
  side: LimitSide,
  quantile: number,
  horizon: number,
): ConfidenceLimitCrossing {
  const sign = side === 'lower' ? 1 : -1;
  const margin = (time: number): number => {
    const { mean, standardError } = lineMeanAt(line, time);
    return sign * (mean - limit) - quantile * standardError;
  };
  const limitName = side === 'lower' ? 'lower confidence limit' : 'upper confidence limit';
  if (margin(0) <= 0) {
    return {
      status: 'fails-at-start',
      time: 0,
      horizon,
      reason: `The ${limitName} is already outside the acceptance limit at time 0.`,
    };
  }
  const d = sign * (line.valueAtCentre - limit);
  const beta = sign * line.slope;
  const q2 = quantile * quantile;
  const quadratic = beta * beta - q2 * line.varianceSlope;
  const half = d * beta - q2 * line.covarianceCentreSlope;
  const constant = d * d - q2 * line.varianceAtCentre;
  const roots: number[] = [];
  const scale = Math.max(Math.abs(half), Math.abs(constant), Number.MIN_VALUE);
  if (Math.abs(quadratic) <= DEGENERATE_QUADRATIC * scale) {
    if (half !== 0) {
      roots.push(-constant / (2 * half));
    }
  } else {
    const discriminant = half * half - quadratic * constant;
    if (discriminant >= 0) {
      const root = -(half + (half >= 0 ? 1 : -1) * Math.sqrt(discriminant));
      roots.push(root / quadratic);
      if (root !== 0) {
        roots.push(constant / root);
      }
    }
  }
  const polish = (distance: number): number => {
    let best = line.centreTime + distance;
    for (let step = 0; step < POLISH_STEPS; step++) {
      const { standardError } = lineMeanAt(line, best);
      const u = best - line.centreTime;
      const derivative =
        beta -
        (standardError > 0
          ? (quantile * (line.covarianceCentreSlope + u * line.varianceSlope)) / standardError
          : 0);
      if (derivative === 0) {
        break;
      }
      const next = best - margin(best) / derivative;
      if (!(Math.abs(margin(next)) < Math.abs(margin(best)))) {
        break;
      }
      best = next;
    }
    return best;
  };
  const times = roots
    .filter((u) => Number.isFinite(u) && d + beta * u >= -Math.abs(d) * 1e-12)
    .map(polish)
    .filter((time) => time > 0 && time <= horizon)
    .sort((x, y) => x - y);
  const time = times[0];
  if (time === undefined) {
    return {
      status: 'no-crossing-within-horizon',
      time: null,
      horizon,
      reason: `The ${limitName} does not meet the acceptance limit within ${formatNumber(horizon)} time units.`,
    };
  }
  return {
    status: 'crossing',
    time,
    horizon,
    reason: `The ${limitName} meets the acceptance limit at ${formatNumber(time)} time units (the dataset's unit of time).`,
  };
}
