/**
 * The thresholds of the reaction-order decision (`select-order.ts`), in one place so that a method
 * statement can quote them and a change to one is reviewed on its own.
 *
 * Calibration: `tests/bench/order-choice.ts` (orders 0, 1, 2; 5–15 points on uneven pulls with
 * replicates; 0.5–3 % constant or proportional noise; 10–90 % reacted). The requirement is a
 * confidently wrong order in at most 1 % of series in every cell of that grid and, subject to that,
 * an order named as often as possible. Calibrated (engine 0.3.0, issue 12 §2) on seeds 777–780
 * (268,800 series, 4,800 per cell), checked on the published seed. Findings:
 * - The evidence is the lead of the best integer law over the runner-up integer law only; the
 *   free-order law (which nests them) enters only as a consistency check (F test), never in the lead.
 * - The three integer laws have the same parameter count, so their AICc lead is N·ln(RSS ratio), a
 *   profile likelihood ratio that overstates the evidence of few points (σ and the two law
 *   parameters are estimated from the same N). The decision uses (N − 2)·ln(RSS ratio) instead:
 *   twice the log ratio of the marginal likelihoods with σ (prior 1/σ) and the two law parameters
 *   (flat prior) integrated out, leaving out the Jacobian-determinant term (Box & Tiao, Bayesian
 *   Inference in Statistical Analysis, 1973, §2.7; from memory). A fixed ΔAICc lead of 10 named
 *   42.3 % of the grid with a worst cell of 0.81 % wrong over 4,800 series and 1.17 % on seed 780
 *   alone (40 % reacted, 2 % proportional noise); (N − 2)·ln(RSS ratio) ≥ 7.5 names 41.4 % with a
 *   worst cell of 0.67 % (1.00 % on seed 780, 0.67 % on the published seed).
 * - No variant tried names materially more within the limit: thresholds per point count, a lower
 *   conversion floor (20 %), a lower lead where the relative scatter is small against the
 *   curvature, the free-order F test rejecting the other integer laws, and the free-order interval
 *   excluding them each gained at most one point of the grid at the same worst-cell rate. A
 *   per-cell oracle (a threshold tuned knowing the true cell) reaches about 39 % at 40 % reacted
 *   and 82 % at 60 %: the abstentions left are where these series do not carry the information.
 */

/**
 * Fraction of the initial value that must have reacted on the best-fitting curve before an order is named
 * (calibrated above; the textbook warning that at ≤ 10–20 % loss the orders cannot be told apart within assay
 * error: Connors, Amidon & Stella, Chemical Stability of Pharmaceuticals, from memory).
 */
export const MIN_FRACTION_REACTED = 0.3;
/**
 * ΔAICc at which the data are said to strongly disfavour an analyst-fixed order (Burnham & Anderson 2002's
 * "Δ > 10: essentially no support", from memory). Not the naming rule: see `DECISIVE_ORDER_EVIDENCE`.
 */
export const DECISIVE_DELTA_AICC = 10;
/**
 * Small-sample evidence, (N − 2)·ln(RSS of the runner-up integer law / RSS of the best), needed to name an
 * order (calibrated above). For 9 points it equals a ΔAICc lead of 9.6, for 5 points 12.5, for 15 points 8.7.
 */
export const DECISIVE_ORDER_EVIDENCE = 7.5;

/**
 * The decision's evidence from the AICc lead between two integer laws of N points. They share their
 * parameter count, so the lead is N·ln(RSS ratio) and the evidence is lead·(N − 2)/N.
 *
 * Example: a lead of 12 over 9 points is evidence 12·7/9 = 9.33.
 */
export function orderEvidence(deltaAicc: number, pointCount: number): number {
  return (deltaAicc * (pointCount - 2)) / pointCount;
}
/** The free-order F test must not reject the named integer order at this level (strict, so it alone abstains on ≤ 0.1 % of clean series). */
export const ORDER_CONSISTENCY_ALPHA = 0.001;
/** The runs test on the named law's residuals must not show systematic misfit at this level. */
export const SYSTEMATIC_MISFIT_ALPHA = 0.001;
/** AICc needs N − K − 1 > 0 with K = 3 for a two-parameter law plus its error SD, so at least 5 points. */
export const MIN_POINTS_FOR_COMPARISON = 5;
/** Largest confidently-wrong rate allowed in any cell of the order-choice benchmark (`tests/bench/order-choice.ts`). */
export const MAX_WRONG_ORDER_RATE_PER_CELL = 0.01;
