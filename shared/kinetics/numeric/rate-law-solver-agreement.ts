/**
 * Test and benchmark support (not part of the engine): fits one series the way the product does
 * (`analyseSeries`: linearised plots → starting values → `fitRateLaw` for orders 0, 1, 2 and the
 * free order, constant and — when every value is positive — proportional error) and fits the same
 * law to the same data, unweighted on the same scale, from the same start with the NIST-checked
 * `levenbergMarquardt`, then measures how far the two answers are apart.
 *
 * Why: the rate-law fitter streams its normal equations for speed and is checked against no
 * certified problem; the MINPACK port is checked against NIST StRD. Agreement on the benchmark
 * series carries the certification over — to the number of digits measured here.
 *
 * How a pair is classified:
 * - 'same-minimum': both converged and every parameter differs by at most
 *   `SAME_MINIMUM_STANDARD_ERRORS` of its standard error; the digits measure convergence.
 * - 'search-limit': the free-order fit stopped at an end of `ORDER_SEARCH_RANGE`, i.e. solved the
 *   problem with n fixed there; the reference then fits (C0, k) with n fixed at that end.
 * - 'different-minimum': both converged to points that differ by more (the zero-order law whose
 *   line reaches 0 inside the data has a kink at every point the end passes, hence several local
 *   minima); the reference is then also started from the fast solver's answer, to check that this
 *   answer is a minimum of its own.
 * - 'reference-failed' / 'fast-failed': one solver did not converge (or threw).
 * The fast solver repairs an infeasible start by halving k (up to 60 times); the reference is
 * given the same repaired start, since it has no repair of its own.
 *
 * Digits are −log10 of the relative difference (`significantDigits`, capped at 15). Standard
 * errors are compared as √diag(s²·(JᵀJ)⁻¹) of each solver at its own answer: the fast solver's
 * from the normal equations by Cholesky, the reference's from the pivoted QR of J.
 *
 * Throws what `prepareSeries` throws for an unusable series.
 */
import { fitRateLaw, type RateLawFit, type RateLawModel, type RateLawStart } from '../order/fit-rate-law.ts';
import { rateLawValue } from '../order/integrated-rate-law.ts';
import { linearisedFits } from '../order/linearised-fits.ts';
import { prepareSeries } from '../order/prepare-series.ts';
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
/**
 * `fitRateLaw` starts series longer than this from a fit to a subsample, whatever start it is
 * given (`WARM_START_MIN_POINTS` there, not exported), so a restart at the reference's answer
 * says nothing on such series.
 */
const FAST_SOLVER_WARM_START_MIN_POINTS = 5000;
/** The fast solver's repair of an infeasible start: halve k at most this often (as in `fitRateLaw`). */
const START_REPAIR_HALVINGS = 60;

export type AgreementKind =
  | 'same-minimum'
  | 'search-limit'
  | 'different-minimum'
  | 'reference-failed'
  | 'fast-failed';

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
  /** The fast solver's parameters (C0, k, n) and its stopping reason. */
  fast: { parameters: number[]; reason: string; residualSumOfSquares: number } | null;
  reference: { parameters: number[]; reason: string; residualSumOfSquares: number } | null;
  /**
   * 'same-minimum' on series up to 5000 points only: `fitRateLaw` started at the reference's answer — its iterations, and the
   * digits of its parameters and standard errors against the reference's. Zero iterations and full
   * digits show that both solvers minimise the same objective and compute the same covariance.
   */
  fastFromReferenceAnswer?: {
    iterations: number;
    parameterDigits: number;
    standardErrorDigits: number | null;
  };
  /** 'different-minimum' only: the reference started at the fast solver's answer, in standard errors from it. */
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
  const fastSummary = {
    parameters: [fast.initialValue, fast.rateConstant, fast.n],
    reason: fast.reason,
    residualSumOfSquares: fast.residualSumOfSquares,
  };
  if (!fast.converged) return { result: failed(base, 'fast-failed', fastSummary, fast.reason), fast };

  const fixedOrder = model === 'n' && fast.atSearchLimit ? fast.n : null;
  const law = rateLawProblem(model, times, values, errorModel, fixedOrder);
  const initial = law.feasibleStart(
    fixedOrder === null && model === 'n'
      ? [start.initialValue, start.rateConstant, start.n ?? 1]
      : [start.initialValue, start.rateConstant],
  );
  const reference = levenbergMarquardt({ ...law.problem, initial });
  const referenceSummary = summary(reference);
  if (!reference.converged) {
    return {
      result: failed(base, 'reference-failed', fastSummary, reference.reason, referenceSummary),
      fast,
    };
  }
  const compared = reference.parameters.length;
  const fastParameters = fastSummary.parameters.slice(0, compared);
  const standardErrorsApart = Math.max(
    ...fastParameters.map(
      (value, j) => Math.abs(value - reference.parameters[j]!) / reference.standardErrors[j]!,
    ),
  );
  const kind: AgreementKind =
    fixedOrder !== null
      ? 'search-limit'
      : standardErrorsApart <= SAME_MINIMUM_STANDARD_ERRORS
        ? 'same-minimum'
        : 'different-minimum';
  const result: SolverComparison = {
    ...base,
    kind,
    parameterDigits: digitsApart(fastParameters, reference.parameters),
    // With n fixed the reference has no standard error for n, and its others are those of a 2-parameter fit.
    standardErrorDigits:
      fixedOrder !== null || fast.standardErrors === null
        ? null
        : digitsApart(fast.standardErrors, reference.standardErrors),
    standardErrorsApart,
    fast: fastSummary,
    reference: referenceSummary,
  };
  if (kind === 'same-minimum' && times.length <= FAST_SOLVER_WARM_START_MIN_POINTS) {
    const [initialValue, rateConstant, n] = reference.parameters;
    const restarted = fitRateLaw(model, times, values, errorModel, {
      initialValue: initialValue!,
      rateConstant: rateConstant!,
      ...(n === undefined ? {} : { n }),
    });
    result.fastFromReferenceAnswer = {
      iterations: restarted.iterations,
      parameterDigits: digitsApart(
        [restarted.initialValue, restarted.rateConstant, restarted.n],
        reference.parameters,
      ),
      standardErrorDigits:
        restarted.standardErrors === null
          ? null
          : digitsApart(restarted.standardErrors, reference.standardErrors),
    };
  }
  if (kind === 'different-minimum') {
    const fromFastAnswer = levenbergMarquardt({ ...law.problem, initial: fastParameters });
    result.standardErrorsApartFromFastAnswer = fromFastAnswer.converged
      ? Math.max(
          ...fastParameters.map(
            (value, j) => Math.abs(value - fromFastAnswer.parameters[j]!) / fromFastAnswer.standardErrors[j]!,
          ),
        )
      : Number.POSITIVE_INFINITY;
  }
  return { result, fast };
}

/**
 * The rate law as a `NonlinearProblem` on the fitting scale: C(t) for constant error, ln C(t) for
 * proportional error, with the analytic derivatives of `integrated-rate-law.ts` (the same code the
 * fast solver evaluates), and n either free (third parameter) or fixed.
 */
function rateLawProblem(
  model: RateLawModel,
  times: Float64Array,
  values: Float64Array,
  errorModel: ErrorModel,
  fixedOrder: number | null,
) {
  const logScale = errorModel === 'proportional';
  const order = (parameters: readonly number[]): number =>
    model === 'n' ? (fixedOrder ?? parameters[2]!) : model;
  const parameterCount = model === 'n' && fixedOrder === null ? 3 : 2;
  const gradient = new Float64Array(3);
  const law = (parameters: readonly number[], time: number, withGradient: boolean): number =>
    rateLawValue(
      model,
      parameters[0]!,
      parameters[1]!,
      order(parameters),
      time,
      withGradient ? gradient : null,
    );
  const problem = {
    model: (parameters: readonly number[], time: number) => {
      const value = law(parameters, time, false);
      return logScale ? Math.log(value) : value;
    },
    // ∂ln C/∂θ = (∂C/∂θ)/C on the log scale.
    jacobian: (parameters: readonly number[], time: number) => {
      const value = law(parameters, time, true);
      return Array.from(gradient.subarray(0, parameterCount), (entry) => (logScale ? entry / value : entry));
    },
    x: Array.from(times),
    y: Array.from(values, (value) => (logScale ? Math.log(value) : value)),
  };
  const feasibleStart = (initial: number[]): number[] => {
    const repaired = [...initial];
    const feasible = () => problem.x.every((time) => Number.isFinite(problem.model(repaired, time)));
    for (let halving = 0; halving < START_REPAIR_HALVINGS && !feasible(); halving++) {
      repaired[1] = repaired[1]! / 2;
    }
    return repaired;
  };
  return { problem, feasibleStart };
}

function digitsApart(values: readonly number[], reference: readonly number[]): number {
  return Math.min(...reference.map((value, j) => significantDigits(values[j]!, value)));
}

function summary(fit: NonlinearFit): SolverComparison['reference'] {
  return { parameters: fit.parameters, reason: fit.reason, residualSumOfSquares: fit.residualSumOfSquares };
}

function failed(
  base: Pick<SolverComparison, 'seriesId' | 'model' | 'errorModel'>,
  kind: 'fast-failed' | 'reference-failed',
  fast: SolverComparison['fast'],
  reason: string,
  reference: SolverComparison['reference'] = null,
): SolverComparison {
  return {
    ...base,
    kind,
    parameterDigits: 0,
    standardErrorDigits: null,
    standardErrorsApart: Number.POSITIVE_INFINITY,
    fast: fast ?? { parameters: [], reason, residualSumOfSquares: Number.NaN },
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
