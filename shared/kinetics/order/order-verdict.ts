import type { RateLawFit } from './fit-rate-law.ts';
import {
  DECISIVE_ORDER_EVIDENCE,
  MIN_FRACTION_REACTED,
  ORDER_CONSISTENCY_ALPHA,
  orderEvidence,
  SYSTEMATIC_MISFIT_ALPHA,
} from './order-decision-thresholds.ts';
import type { OrderSelection } from './order-selection.ts';

/**
 * The order decision in a chemist's words: what was named and on what evidence, or why no order is named —
 * how much has reacted, how many half-lives the data cover, and how the curvature that separates the orders
 * compares with the scatter of the points.
 *
 * Throws nothing.
 *
 * Example: "Reaction order not identified: only 12 % of the initial value has reacted (0.18 half-lives);
 * at least 30 % is needed to tell the orders apart."
 */

const ORDER_NAMES = ['zero order', 'first order', 'second order'] as const;
const ORDER_ADJECTIVES = ['zero-order', 'first-order', 'second-order'] as const;

export function orderVerdict(
  selection: OrderSelection,
  reasons: readonly string[],
  bestFit: RateLawFit | null,
  valueUnit: string,
  pointCount: number,
): string {
  const best = selection.bestIntegerOrder;
  const fraction = selection.fractionReacted;
  const coverage =
    fraction === null
      ? ''
      : `${percent(fraction)} of the initial value has reacted${
          selection.halfLivesCovered === null ? '' : ` (${number(selection.halfLivesCovered)} half-lives)`
        }`;
  const freeOrder =
    selection.freeOrder === null
      ? ''
      : `the free-order fit gives n = ${number(selection.freeOrder.n)}${
          selection.freeOrder.ci === null
            ? ''
            : ` (interval ${number(selection.freeOrder.ci[0])} to ${number(selection.freeOrder.ci[1])})`
        }`;
  const bestTest = best === null ? null : selection.fTests[best];
  if (selection.selectedOrder !== null && best !== null) {
    const weight = selection.integerWeights[best];
    const parts = [
      `${capitalise(ORDER_NAMES[best])}: its AICc is lower than that of ${ORDER_NAMES[selection.runnerUpOrder!]}, the next best, by ${number(selection.deltaAiccToRunnerUp!)} (Akaike weight ${weight === null || weight === undefined ? 'n/a' : weight.toFixed(2)})`,
      coverage,
    ];
    if (freeOrder !== '') {
      parts.push(
        `${freeOrder}, consistent with ${ORDER_NAMES[best]}${bestTest ? ` (F-test p = ${pValue(bestTest.p)})` : ''}`,
      );
    }
    return `${parts.filter((part) => part !== '').join('; ')}.`;
  }
  const why = [...reasons];
  if (bestFit !== null && !bestFit.converged)
    why.push(`the best-fitting law did not converge (${bestFit.reason})`);
  if (bestFit !== null && bestFit.rateConstant <= 0) {
    why.push(
      'the values do not fall over time, and these order laws describe the loss of the measured substance',
    );
  } else if (fraction !== null && fraction < MIN_FRACTION_REACTED) {
    why.push(
      `only ${coverage}; at least ${percent(MIN_FRACTION_REACTED)} is needed to tell the orders apart`,
    );
  }
  const delta = selection.deltaAiccToRunnerUp;
  const evidence = delta === null ? null : orderEvidence(delta, pointCount);
  if (
    delta !== null &&
    evidence !== null &&
    evidence < DECISIVE_ORDER_EVIDENCE &&
    best !== null &&
    selection.runnerUpOrder !== null
  ) {
    const needed = (DECISIVE_ORDER_EVIDENCE * pointCount) / (pointCount - 2);
    const scatter = selection.residualStandardDeviation;
    const scatterWords =
      scatter === null
        ? ''
        : bestFit?.errorModel === 'proportional'
          ? `, against a scatter of the points of ${percent(scatter)} (relative residual SD)`
          : `, against a scatter of the points of ${number(scatter)} ${valueUnit} (residual SD)`;
    why.push(
      `the best-fitting ${ORDER_ADJECTIVES[best]} and ${ORDER_ADJECTIVES[selection.runnerUpOrder]} curves differ by at most ${number(selection.curveSeparation ?? 0)} ${valueUnit} at the measured times${scatterWords}, so their AICc differ by only ${number(delta)} (${number(needed)} needed with ${pointCount} points)`,
    );
  }
  if (bestTest !== null && bestTest !== undefined && bestTest.p < ORDER_CONSISTENCY_ALPHA && best !== null) {
    why.push(`${freeOrder}, which contradicts ${ORDER_NAMES[best]} (F-test p = ${pValue(bestTest.p)})`);
  }
  if (selection.runsTestP !== null && selection.runsTestP < SYSTEMATIC_MISFIT_ALPHA) {
    why.push(
      `the residuals of the best fit run in long stretches (runs test p = ${pValue(selection.runsTestP)}), so no integer-order law follows the shape of the curve`,
    );
  }
  if (why.length === 0) why.push('the evidence does not meet the decision rule');
  return `Reaction order not identified: ${why.join('; ')}.`;
}

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function percent(fraction: number): string {
  const value = fraction * 100;
  return `${Math.abs(value) >= 10 ? value.toFixed(0) : value.toPrecision(2)} %`;
}

function number(value: number): string {
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e5 ? String(Number(value.toPrecision(3))) : value.toExponential(2);
}

function pValue(p: number): string {
  return p < 1e-4 ? p.toExponential(1) : String(Number(p.toPrecision(2)));
}
