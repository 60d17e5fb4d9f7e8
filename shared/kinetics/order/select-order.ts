import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import type { IntegerOrder } from '../types.ts';
import { extraSumOfSquaresFTest } from './extra-sum-of-squares-f-test.ts';
import type { RateLawFit } from './fit-rate-law.ts';
import { aicc, akaikeWeights } from './information-criteria.ts';
import { prepareRateLaw, rateLawAt } from './integrated-rate-law.ts';
import {
  DECISIVE_ORDER_EVIDENCE,
  MIN_FRACTION_REACTED,
  MIN_POINTS_FOR_COMPARISON,
  ORDER_CONSISTENCY_ALPHA,
  orderEvidence,
  SYSTEMATIC_MISFIT_ALPHA,
} from './order-decision-thresholds.ts';
import type { ModelFits, OrderSelection } from './order-selection.ts';
import { orderVerdict } from './order-verdict.ts';
import { runsTest } from './runs-test.ts';

/**
 * Decides whether the data name a reaction order (0, 1 or 2) — and abstains, with the reason in a
 * chemist's words, when they do not. A confidently wrong order is the worst outcome; "not identified"
 * on thin evidence is the correct answer.
 *
 * Rule (every threshold is a named constant in `order-decision-thresholds.ts`). An integer order is named only when all hold:
 * 1. all three integer laws were fitted and AICc is defined for them (at least 5 points);
 * 2. the best-fitting integer law (lowest AICc, computed on the original scale) converged and falls (k > 0);
 * 3. at least `MIN_FRACTION_REACTED` (30 %) of the initial value has reacted on that curve (below that
 *    conversion the orders cannot be told apart within assay error; docs/methods.md#order-decision);
 * 4. its lead over the runner-up integer law, as small-sample evidence (N − 2)·ln(RSS ratio) = ΔAICc·(N − 2)/N
 *    (`orderEvidence`), is at least `DECISIVE_ORDER_EVIDENCE` (7.5; a ΔAICc lead of 12.5 for 5 points, 9.6
 *    for 9, 8.7 for 15). The lead is taken among the integer laws only: the free-order law contains each of
 *    them, so it can never lose by much and enters only as the check in 5;
 * 5. the extra-sum-of-squares F test of the free-order fit against it does not reject at
 *    `ORDER_CONSISTENCY_ALPHA` (the fitted n is consistent with the integer; a stricter level than 0.05
 *    because on its own this test would abstain on that fraction of clean series of a true integer order);
 * 6. the runs test on its residuals does not show systematic misfit at `SYSTEMATIC_MISFIT_ALPHA`.
 *
 * Calibration (`order-decision-thresholds.ts`, `tests/bench/order-choice.ts`): a confidently wrong order in
 * at most 1 % of simulated series in every cell of fraction reacted × noise, and subject to that as many
 * orders named as the rule family allows (no variant tried named materially more; the findings are there).
 *
 * Reference: docs/methods.md#order-decision (conversion needed, AICc, Akaike weights, nested F test);
 * K. P. Burnham & D. R. Anderson, Model Selection and Multimodel Inference, 2nd ed. (2002) §2.6
 * (from memory).
 *
 * Throws nothing: every missing ingredient is a reason to abstain, stated in the verdict.
 *
 * Example: noise-free first-order data over 80 % conversion name first order with Akaike weight 1.00;
 * the same law over 10 % conversion gives `selectedOrder: null` and a verdict beginning
 * "Reaction order not identified: only 10 % of the initial value has reacted".
 */

export type { ModelFits, OrderSelection } from './order-selection.ts';

export function selectOrder(
  fits: ModelFits,
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  confidenceLevel: number,
  valueUnit: string,
): OrderSelection {
  const pointCount = times.length;
  const criteria = fits.map((fit) =>
    fit === null ? null : aicc(fit.logLikelihood, fit.parameterCount, pointCount),
  );
  const weights = akaikeWeights(criteria);
  const integerWeights = akaikeWeights(criteria.slice(0, 3));
  const integerFits = fits.slice(0, 3);
  const ranked = ([0, 1, 2] as IntegerOrder[])
    .filter((order) => integerFits[order] !== null)
    .sort((a, b) => rankKey(fits[a]!, criteria[a]!) - rankKey(fits[b]!, criteria[b]!));
  const best = ranked[0] ?? null;
  const runnerUp = ranked[1] ?? null;
  const bestFit = best === null ? null : fits[best]!;
  const free = fits[3];
  const fTests = integerFits.map((fit) =>
    fit === null || free === null || free.degreesOfFreedom < 1
      ? null
      : extraSumOfSquaresFTest(
          fit.residualSumOfSquares,
          fit.degreesOfFreedom,
          Math.min(free.residualSumOfSquares, fit.residualSumOfSquares),
          free.degreesOfFreedom,
        ),
  );
  const bestCriterion = best === null ? null : criteria[best]!;
  const runnerCriterion = runnerUp === null ? null : criteria[runnerUp]!;
  const deltaAiccToRunnerUp =
    bestCriterion !== null && runnerCriterion !== null && ranked.length === 3
      ? runnerCriterion - bestCriterion
      : null;

  let fractionReacted: number | null = null;
  let curveSeparation: number | null = null;
  let runsTestP: number | null = null;
  if (bestFit !== null) {
    let lastTime = times[0]!;
    for (let i = 1; i < pointCount; i++) lastTime = Math.max(lastTime, times[i]!);
    const bestLaw = prepareRateLaw(bestFit.model, bestFit.initialValue, bestFit.rateConstant, bestFit.n);
    const endValue = rateLawAt(bestLaw, lastTime, null);
    if (Number.isFinite(endValue) && bestFit.initialValue > 0)
      fractionReacted = 1 - endValue / bestFit.initialValue;
    const runnerFit = runnerUp === null ? null : fits[runnerUp]!;
    const runnerLaw =
      runnerFit === null
        ? null
        : prepareRateLaw(runnerFit.model, runnerFit.initialValue, runnerFit.rateConstant);
    const residuals = new Float64Array(pointCount);
    let separation = 0;
    for (let i = 0; i < pointCount; i++) {
      const predicted = rateLawAt(bestLaw, times[i]!, null);
      residuals[i] =
        bestFit.errorModel === 'proportional'
          ? Math.log(values[i]!) - Math.log(predicted)
          : values[i]! - predicted;
      if (runnerLaw !== null)
        separation = Math.max(separation, Math.abs(predicted - rateLawAt(runnerLaw, times[i]!, null)));
    }
    curveSeparation = runnerLaw === null ? null : separation;
    runsTestP = runsTest(residuals).p;
  }
  const halfLivesCovered =
    fractionReacted !== null && fractionReacted > 0 && fractionReacted < 1
      ? -Math.log2(1 - fractionReacted)
      : null;
  let freeOrder: OrderSelection['freeOrder'] = null;
  if (free !== null) {
    const se = free.standardErrors?.[2];
    const q = studentTQuantile(1 - (1 - confidenceLevel) / 2, free.degreesOfFreedom);
    freeOrder = { n: free.n, ci: se === undefined ? null : [free.n - q * se, free.n + q * se] };
  }

  const reasons: string[] = [];
  if (ranked.length < 3 || criteria.slice(0, 3).some((value) => value === null)) {
    reasons.push(
      pointCount < MIN_POINTS_FOR_COMPARISON
        ? `with ${pointCount} points AICc cannot compare the orders (at least ${MIN_POINTS_FOR_COMPARISON} are needed)`
        : 'not every integer-order law could be fitted',
    );
  }
  const bestFalls = bestFit !== null && bestFit.rateConstant > 0;
  const bestTest = best === null ? null : fTests[best]!;
  const selected =
    best !== null &&
    reasons.length === 0 &&
    bestFit!.converged &&
    bestFalls &&
    fractionReacted !== null &&
    fractionReacted >= MIN_FRACTION_REACTED &&
    deltaAiccToRunnerUp !== null &&
    orderEvidence(deltaAiccToRunnerUp, pointCount) >= DECISIVE_ORDER_EVIDENCE &&
    (bestTest === null || bestTest.p >= ORDER_CONSISTENCY_ALPHA) &&
    (runsTestP === null || runsTestP >= SYSTEMATIC_MISFIT_ALPHA)
      ? best
      : null;
  const selection: OrderSelection = {
    selectedOrder: selected,
    bestIntegerOrder: best,
    verdict: '',
    aicc: criteria,
    weights,
    integerWeights,
    deltaAiccToRunnerUp,
    runnerUpOrder: runnerUp,
    fTests,
    fractionReacted,
    halfLivesCovered,
    curveSeparation,
    residualStandardDeviation: bestFit === null ? null : bestFit.residualStandardDeviation,
    runsTestP,
    freeOrder,
  };
  selection.verdict = orderVerdict(selection, reasons, bestFit, valueUnit, pointCount);
  return selection;
}

function rankKey(fit: RateLawFit, criterion: number | null): number {
  return criterion ?? -2 * fit.logLikelihood;
}
