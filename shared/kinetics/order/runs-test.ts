import jStat from 'jstat';

/**
 * Wald–Wolfowitz runs test on the signs of residuals taken in time order: too few runs (long stretches
 * of points above, then below, the curve) means the curve misses a systematic pattern in the data.
 *
 * Why: a wrong rate law leaves residuals that bend — positive at both ends and negative in the middle,
 * or the reverse — long before the misfit shows in R². The test uses only the signs, so it needs no
 * assumption about the error distribution.
 *
 * Formula in words: drop zero residuals; with N₁ positive and N₂ negative signs and R runs, the exact
 * probability of R runs under random order is P(R = 2j) = 2·C(N₁−1, j−1)·C(N₂−1, j−1)/C(N, N₁) and
 * P(R = 2j+1) = [C(N₁−1, j−1)·C(N₂−1, j) + C(N₁−1, j)·C(N₂−1, j−1)]/C(N, N₁). The one-sided p-value for
 * "too few runs" is P(R ≤ observed). Above `EXACT_LIMIT` signs the normal approximation with mean
 * 2N₁N₂/N + 1, variance 2N₁N₂(2N₁N₂ − N)/(N²(N − 1)) and a continuity correction of ½ is used.
 *
 * Reference: A. Wald & J. Wolfowitz, Ann. Math. Stat. 11 (1940) 147–162; NIST/SEMATECH e-Handbook §1.3.5.13
 * "Runs Test for Detecting Non-randomness" (https://www.itl.nist.gov/div898/handbook/eda/section3/eda35d.htm).
 *
 * Throws nothing: with fewer than 2 signs of either kind no pattern can be seen and p = 1.
 *
 * Example: signs + + + − − − (2 runs, N₁ = N₂ = 3) give p = P(R ≤ 2) = 2/20 = 0.1.
 */

export interface RunsTestResult {
  runs: number;
  positives: number;
  negatives: number;
  expectedRuns: number;
  /** P(R ≤ observed runs) under random signs: small means systematic misfit. */
  p: number;
  method: 'exact' | 'normal';
}

/** Largest number of signs for which the exact distribution is summed. */
export const EXACT_LIMIT = 400;

export function runsTest(residuals: ArrayLike<number>): RunsTestResult {
  let positives = 0;
  let negatives = 0;
  let runs = 0;
  let previous = 0;
  for (let i = 0; i < residuals.length; i++) {
    const value = residuals[i]!;
    if (value === 0) continue;
    const sign = value > 0 ? 1 : -1;
    if (sign > 0) positives++;
    else negatives++;
    if (sign !== previous) runs++;
    previous = sign;
  }
  const total = positives + negatives;
  const expectedRuns = total === 0 ? 0 : (2 * positives * negatives) / total + 1;
  if (positives < 2 || negatives < 2) {
    return { runs, positives, negatives, expectedRuns, p: 1, method: 'exact' };
  }
  if (total <= EXACT_LIMIT) {
    return {
      runs,
      positives,
      negatives,
      expectedRuns,
      p: exactLowerTail(runs, positives, negatives),
      method: 'exact',
    };
  }
  const product = 2 * positives * negatives;
  const variance = (product * (product - total)) / (total * total * (total - 1));
  const z = (runs + 0.5 - expectedRuns) / Math.sqrt(variance);
  return { runs, positives, negatives, expectedRuns, p: normalLowerTail(z), method: 'normal' };
}

function exactLowerTail(runs: number, positives: number, negatives: number): number {
  const logFactorial = new Float64Array(positives + negatives + 1);
  for (let i = 2; i < logFactorial.length; i++) logFactorial[i] = logFactorial[i - 1]! + Math.log(i);
  const logChoose = (n: number, k: number): number =>
    k < 0 || k > n ? Number.NEGATIVE_INFINITY : logFactorial[n]! - logFactorial[k]! - logFactorial[n - k]!;
  const logTotal = logChoose(positives + negatives, positives);
  let p = 0;
  for (let r = 2; r <= runs; r++) {
    const j = Math.floor(r / 2);
    if (r % 2 === 0) {
      p += 2 * Math.exp(logChoose(positives - 1, j - 1) + logChoose(negatives - 1, j - 1) - logTotal);
    } else {
      p +=
        Math.exp(logChoose(positives - 1, j - 1) + logChoose(negatives - 1, j) - logTotal) +
        Math.exp(logChoose(positives - 1, j) + logChoose(negatives - 1, j - 1) - logTotal);
    }
  }
  return Math.min(1, p);
}

/** Standard normal lower tail Φ(z), from jStat (complementary error function). */
function normalLowerTail(z: number): number {
  return Math.min(1, Math.max(0, jStat.normal.cdf(z, 0, 1)));
}
