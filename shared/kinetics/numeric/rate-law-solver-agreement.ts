/**
 * Test and benchmark support (not part of the engine): fits one series the way the product does
 * (`analyseSeries`: linearised plots → starting values → `fitRateLaw` for orders 0, 1, 2 and the
 * free order, constant and — when every value is positive — proportional error) and solves the same
 * least-squares problem (`order/rate-law-problem.ts`) with the NIST-checked `levenbergMarquardt`
 * alone, from the same start, then measures how far the two answers are apart.
 *
 * Why: `fitRateLaw` runs a streamed first stage (`order/approach-rate-law-minimum.ts`) and finishes
 * with the NIST-checked solver. Agreement with that solver run alone from the product's own starting
 * values shows that the first stage only shortens the way: the reported answer is the minimum the
 * NIST-checked solver finds, to the number of digits measured here.
 *
 * How a pair is classified:
 * - 'same-minimum': both converged and every parameter differs by at most
 *   `SAME_MINIMUM_STANDARD_ERRORS` of its standard error; the digits measure convergence.
 * - 'search-limit': the free-order fit holds n at an end of `ORDER_SEARCH_RANGE`, i.e. solves the
 *   problem with n fixed there; the reference then fits (C0, r0) with n fixed at that end.
 * - 'different-minimum': both converged to points that differ by more (the zero-order law whose
 *   line reaches 0 inside the data has a kink at every point the end passes, hence several local
 *   minima); the reference is then also started from the product's answer, to check that this
 *   answer is a minimum of its own.
 * - 'reference-failed' / 'fast-failed': one did not converge (or threw).
 * The product repairs an infeasible start by halving k (up to `START_REPAIR_HALVINGS` times); the
 * reference is given the same repaired start, since it has no repair of its own.
 *
 * Digits are −log10 of the relative difference (`significantDigits`, capped at 15), in the reported
 * parameters (C0, k[, n]); for the free order the reference's (C0, r0, n) and covariance are carried
 * to (C0, k, n) as the product does (`order/initial-rate-form.ts`). Standard errors are compared as
 * √diag(s²·(JᵀJ)⁻¹) of each at its own answer.
 *
 * Throws what `prepareSeries` throws for an unusable series.
 */
import { approachRateLawMinimum, START_REPAIR_HALVINGS } from '../order/approach-rate-law-minimum.ts';
import {
  certifiedByFirstStage,
  fitRateLaw,
  type RateLawFit,
  type RateLawModel,
  type RateLawStart,
} from '../order/fit-rate-law.ts';
import { initialRateOf, rateConstantFormCovariance, rateConstantOf } from '../order/initial-rate-form.ts';
import { linearisedFits } from '../order/linearised-fits.ts';
import { prepareSeries } from '../order/prepare-series.ts';
import { rateLawProblem } from '../order/rate-law-problem.ts';
import { startingValues } from '../order/starting-values.ts';
import type { ErrorModel, IntegerOrder, Series } from '../types.ts';
import { levenbergMarquardt, type NonlinearFit } from './levenberg-marquardt.ts';
import { significantDigits } from './nist-strd-reader.ts';

/**
 * Answers this close (in standard errors of the reference) are one minimum reached to different
 * depths: a hundredth of a standard error is statistically one answer, and the distinct local
 * minima met on the benchmark series (zero-order lines ending inside the data) lie about one
 * standard error apart.
 */
export const SAME_MINIMUM_STANDARD_ERRORS = 1e-2;

export type AgreementKind =
  | 'same-minimum'
  | 'search-limit'
  | 'different-minimum'
  | 'reference-failed'
  | 'fast-failed';

/** An answer in the reported parameters (C0, k, n), with its standard errors and stopping reason. */
interface Answer {
  parameters: number[];
  standardErrors: number[] | null;
  reason: string;
  residualSumOfSquares: number;
}

export interface SolverComparison {
  seriesId: string;
  model: RateLawModel;
  errorModel: ErrorModel;
  kind: AgreementKind;
  /** Fewest agreeing significant digits over the compared parameters (C0, k[, n]); 0 when failed. */
  parameterDigits: number;
  /** Fewest agreeing significant digits over their standard errors; null when not comparable. */
  standardErrorDigits: number | null;
  /** Largest parameter difference in standard errors of the reference. */
  standardErrorsApart: number;
  /**
   * Which stage of `fitRateLaw` gave the product's answer: its streamed first stage (certified by its
   * remaining step) or the NIST-checked solver that finishes it otherwise; null when it failed.
   */
  productStage: 'first-stage' | 'levenberg-marquardt' | null;
  /** The product's answer (`fitRateLaw`). */
  fast: Answer | null;
  /** The NIST-checked solver alone from the product's start. */
  reference: Answer | null;
  /** 'different-minimum' only: the reference started at the product's answer, in standard errors from it. */
  standardErrorsApartFromFastAnswer?: number;
}

/** Both solvers on every law the product fits to this series. */
export function compareRateLawSolvers(series: Series): SolverComparison[] {
  const prepared = prepareSeries(series);
  const times = Float64Array.from(prepared.times);
  const values = Float64Array.from(prepared.values);
  const linearised = linearisedFits(times, values, prepared.labelOf);
  const largestValue = values.reduce((largest, value) => Math.max(largest, value), -Infinity);
  const errorModels: ErrorModel[] = values.every((value) => value > 0)
    ? ['constant', 'proportional']
    : ['constant'];
  const comparisons: SolverComparison[] = [];
  const constantFits: (RateLawFit | null)[] = [null, null, null];
  for (const errorModel of errorModels) {
    const integerFits: RateLawFit[] = [];
    for (const order of [0, 1, 2] as IntegerOrder[]) {
      // As `analyseSeries`: constant error from the linearised plots, proportional from the constant-error answer.
      const constantFit = constantFits[order];
      const start =
        errorModel === 'proportional' && constantFit
          ? { initialValue: constantFit.initialValue, rateConstant: constantFit.rateConstant }
          : startingValues(order, linearised, largestValue);
      const comparison = compareOne(series.id, order, times, values, errorModel, start);
      comparisons.push(comparison.result);
      if (comparison.fast !== null) {
        integerFits.push(comparison.fast);
        if (errorModel === 'constant') constantFits[order] = comparison.fast;
      }
    }
    const best = integerFits.reduce<RateLawFit | null>(
      (lowest, fit) =>
        lowest === null || fit.residualSumOfSquares < lowest.residualSumOfSquares ? fit : lowest,
      null,
    );
    if (best !== null) {
      const start = { initialValue: best.initialValue, rateConstant: best.rateConstant, n: best.n };
      comparisons.push(compareOne(series.id, 'n', times, values, errorModel, start).result);
    }
  }
  return comparisons;
}

function compareOne(
  seriesId: string,
  model: RateLawModel,
  times: Float64Array,
  values: Float64Array,
  errorModel: ErrorModel,
  start: RateLawStart,
): { result: SolverComparison; fast: RateLawFit | null } {
  const base = { seriesId, model, errorModel };
  let fast: RateLawFit;
  try {
    fast = fitRateLaw(model, times, values, errorModel, start);
  } catch (error) {
    return { result: failed(base, 'fast-failed', null, `${error}`), fast: null };
  }
  const fastAnswer: Answer = {
    parameters: [fast.initialValue, fast.rateConstant, fast.n],
    standardErrors: fast.standardErrors,
    reason: fast.reason,
    residualSumOfSquares: fast.residualSumOfSquares,
  };
  if (!fast.converged) return { result: failed(base, 'fast-failed', fastAnswer, fast.reason), fast };

  const fixedOrder = model === 'n' && fast.atSearchLimit ? fast.n : null;
  const logScale = errorModel === 'proportional';
  const response = logScale ? Float64Array.from(values, Math.log) : values;
  const productStage = certifiedByFirstStage(approachRateLawMinimum(model, times, response, logScale, start))
    ? ('first-stage' as const)
    : ('levenberg-marquardt' as const);
  const problem = rateLawProblem(model, times, response, logScale, fixedOrder);
  const order = model === 'n' ? (fixedOrder ?? start.n ?? 1) : model;
  const solve = (initial: number[]) =>
    answerOf(
      levenbergMarquardt({ ...problem, initial: initial.slice(0, problem.parameterCount) }),
      model,
      order,
    );
  const reference = solve(feasibleStart(problem, model, [start.initialValue, start.rateConstant, order]));
  if (!reference.converged) {
    return {
      result: {
        ...failed(base, 'reference-failed', fastAnswer, reference.answer.reason, reference.answer),
        productStage,
      },
      fast,
    };
  }
  const compared = fixedOrder === null ? fast.parameterCount : 2;
  const apart = (answer: Answer) =>
    Math.max(
      ...fastAnswer.parameters
        .slice(0, compared)
        .map((value, j) => Math.abs(value - answer.parameters[j]!) / answer.standardErrors![j]!),
    );
  const standardErrorsApart = apart(reference.answer);
  const kind: AgreementKind =
    fixedOrder !== null
      ? 'search-limit'
      : standardErrorsApart <= SAME_MINIMUM_STANDARD_ERRORS
        ? 'same-minimum'
        : 'different-minimum';
  const result: SolverComparison = {
    ...base,
    kind,
    productStage,
    parameterDigits: digitsApart(fastAnswer.parameters.slice(0, compared), reference.answer.parameters),
    // With n fixed the reference has no standard error for n, and its others are those of a 2-parameter fit.
    standardErrorDigits:
      fixedOrder !== null || fast.standardErrors === null
        ? null
        : digitsApart(fast.standardErrors, reference.answer.standardErrors!),
    standardErrorsApart,
    fast: fastAnswer,
    reference: reference.answer,
  };
  if (kind === 'different-minimum') {
    const fromFastAnswer = solve(
      model === 'n'
        ? [fast.initialValue, initialRateOf(fast.initialValue, fast.rateConstant, fast.n), fast.n]
        : [fast.initialValue, fast.rateConstant],
    );
    result.standardErrorsApartFromFastAnswer = fromFastAnswer.converged
      ? apart(fromFastAnswer.answer)
      : Number.POSITIVE_INFINITY;
  }
  return { result, fast };
}

/** The solver's answer in the reported parameters (C0, k, n); for the free order from (C0, r0[, n]). */
function answerOf(
  fit: NonlinearFit,
  model: RateLawModel,
  order: number,
): { answer: Answer; converged: boolean } {
  const [initialValue, rate, fitted] = fit.parameters as [number, number, number | undefined];
  const n = fitted ?? order;
  let standardErrors: number[] | null = fit.standardErrors.length > 0 ? fit.standardErrors : null;
  if (model === 'n' && fitted !== undefined && standardErrors !== null) {
    const covariance = rateConstantFormCovariance(initialValue, rate, n, fit.covariance);
    standardErrors = covariance.map((row, j) => Math.sqrt(Math.max(0, row[j]!)));
  } else if (model === 'n' && standardErrors !== null) {
    // n held fixed: only C0 and k = r0·C0^(−n) vary; carry the 2×2 covariance over the same way.
    const padded = [
      [...fit.covariance[0]!, 0],
      [...fit.covariance[1]!, 0],
      [0, 0, 0],
    ];
    const covariance = rateConstantFormCovariance(initialValue, rate, n, padded);
    standardErrors = [0, 1].map((j) => Math.sqrt(Math.max(0, covariance[j]![j]!)));
  }
  return {
    converged: fit.converged,
    answer: {
      parameters: [initialValue, model === 'n' ? rateConstantOf(initialValue, rate, n) : rate, n],
      standardErrors,
      reason: fit.reason,
      residualSumOfSquares: fit.residualSumOfSquares,
    },
  };
}

/** The start in the solver's parameters, with k (or r0) halved as the product does until feasible. */
function feasibleStart(
  problem: ReturnType<typeof rateLawProblem>,
  model: RateLawModel,
  [initialValue, rateConstant, n]: [number, number, number],
): number[] {
  const repaired = [
    initialValue,
    model === 'n' ? initialRateOf(initialValue, rateConstant, n) : rateConstant,
    n,
  ];
  const feasible = () => problem.x.every((time, i) => Number.isFinite(problem.model(repaired, time, i)));
  for (let halving = 0; halving < START_REPAIR_HALVINGS && !feasible(); halving++) {
    repaired[1] = repaired[1]! / 2;
  }
  return repaired;
}

function digitsApart(values: readonly number[], reference: readonly number[]): number {
  return Math.min(...values.map((value, j) => significantDigits(value, reference[j]!)));
}

function failed(
  base: Pick<SolverComparison, 'seriesId' | 'model' | 'errorModel'>,
  kind: 'fast-failed' | 'reference-failed',
  fast: Answer | null,
  reason: string,
  reference: Answer | null = null,
): SolverComparison {
  return {
    ...base,
    kind,
    productStage: null,
    parameterDigits: 0,
    standardErrorDigits: null,
    standardErrorsApart: Number.POSITIVE_INFINITY,
    fast: fast ?? { parameters: [], standardErrors: null, reason, residualSumOfSquares: Number.NaN },
    reference,
  };
}

/** Fewest digits and the series where they occur, per kind, over many comparisons. */
export function worstAgreement(
  comparisons: readonly SolverComparison[],
  kind: AgreementKind = 'same-minimum',
): {
  count: number;
  parameterDigits: number;
  standardErrorDigits: number | null;
  worst: SolverComparison | null;
} {
  const ofKind = comparisons.filter((comparison) => comparison.kind === kind);
  let worst: SolverComparison | null = null;
  let standardErrorDigits: number | null = null;
  for (const comparison of ofKind) {
    if (worst === null || comparison.parameterDigits < worst.parameterDigits) worst = comparison;
    if (comparison.standardErrorDigits !== null) {
      standardErrorDigits = Math.min(standardErrorDigits ?? 15, comparison.standardErrorDigits);
    }
  }
  return { count: ofKind.length, parameterDigits: worst?.parameterDigits ?? 15, standardErrorDigits, worst };
}
