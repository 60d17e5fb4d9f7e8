import { analyseSeries } from './analyse-series.ts';
import type {
  DatasetArrhenius,
  DatasetFindings,
  DatasetOptions,
  DatasetWarning,
  SeriesResult,
} from './dataset-analysis.ts';
import { type MethodStatement, methodStatement } from './method-statement.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import { conditionShelfLives } from './stability/condition-shelf-lives.ts';
import { type Q1eDeclaration, UNSTATED_DECLARATION } from './stability/q1e-declaration.ts';
import { arrheniusFit } from './temperature/arrhenius-fit.ts';
import { predictRateConstant } from './temperature/predict-rate-constant.ts';
import type { AttributeDirection, IntegerOrder, Series } from './types.ts';
import { rateConstantUnit } from './units.ts';
import { ENGINE_VERSION } from './version.ts';

/**
 * Analyses a whole data set — several batches, possibly at several temperatures — in one call:
 * each series on its own (`analyseSeries`), then an Arrhenius fit across temperatures with k at a
 * storage temperature, then an ICH Q1E shelf life per storage condition, and a method statement.
 *
 * Rules (all quoted in the method statement):
 * - A series the engine cannot analyse (too few points, one time only…) is reported with its
 *   error; the others go on.
 * - Arrhenius (≥ 2 temperatures): one order for all temperatures, because rate constants of
 *   different orders have different units. It is the analyst's order when fixed; otherwise the
 *   integer order with the lowest AICc summed over the series where all three were compared —
 *   the AICc of the joint model with each series' own C0 and k, since log-likelihoods of
 *   independent series add. Each series gives k of that order; a k that is missing or ≤ 0 (no
 *   measurable loss) leaves that series out with the reason. Batches at one temperature are
 *   pooled into one point: the mean of ln k weighted by 1/Var(ln k) = (k/se(k))² (plain mean when
 *   a standard error is missing), so each temperature counts once in the line. The fit is
 *   unweighted unless `arrheniusWeighting: 'inverse-variance'`.
 * - k at `storageTemperatureC` by `predictRateConstant`; for first order also t90 = ln(10/9)/k
 *   and the half-life ln 2/k, with the interval ends of k transformed (a monotone function of one
 *   parameter; docs/methods.md#rate-constant-at-the-storage-temperature).
 * - Q1E (when a limit is given): the batches of each temperature (one group when no temperature
 *   is known), on the scale of the analyst's order; else of the order every batch of that
 *   condition named; else linear on the values (zero order), the Q1E default. The direction is
 *   `decreasing` with a lower limit only, `increasing` with an upper limit only, `either` with both.
 *   The long-term condition the study declares (`q1e`, by default the storage temperature)
 *   proposes a shelf life: the smaller of the statistical estimate and the ICH Q1E extrapolation
 *   limit, rounded down to a whole month; every fact the study leaves unstated takes the most
 *   conservative branch, named as an assumption (`conditionShelfLives`).
 *
 * Throws only what `analyseSeries` throws for the options themselves ('invalid-input' for a
 * confidence outside (0, 1)); every data problem is reported in the result. The result has no NaN
 * or Infinity (JSON-serialisable).
 *
 * Example: three batches at 25 °C and one each at 40, 50, 60 °C of a first-order loss give
 * `arrhenius.order` 1, four temperature points, Ea with its interval, and one Q1E result per
 * temperature when `lowerLimit: 90` is given.
 */

export type {
  ConditionShelfLife,
  DatasetArrhenius,
  DatasetOptions,
  DatasetWarning,
  SeriesResult,
  TemperatureRateConstant,
} from './dataset-analysis.ts';

/** What `analyseDataset` returns: the findings and the method statement that describes them. */
export interface DatasetAnalysis extends DatasetFindings {
  methodStatement: MethodStatement;
}

const ORDER_WORDS = ['zero', 'first', 'second'] as const;

function kineticsFailure<T>(compute: () => T): { value: T } | { error: KineticsError } {
  try {
    return { value: compute() };
  } catch (error) {
    if (error instanceof KineticsError) return { error };
    throw error;
  }
}

/** The order used across temperatures: the analyst's, else the lowest summed AICc. */
function commonOrder(results: readonly SeriesResult[], fixed: IntegerOrder | undefined) {
  const totals: [number | null, number | null, number | null] = [null, null, null];
  for (const result of results) {
    const aicc = result.analysis?.selection.aicc;
    if (!aicc || aicc.slice(0, 3).some((value) => value === null || value === undefined)) continue;
    for (const order of [0, 1, 2] as const) totals[order] = (totals[order] ?? 0) + (aicc[order] as number);
  }
  if (fixed !== undefined) return { order: fixed, source: 'analyst' as const, totals };
  let best: IntegerOrder | null = null;
  for (const order of [0, 1, 2] as const) {
    const total = totals[order];
    if (total !== null && (best === null || total < (totals[best] as number))) best = order;
  }
  return { order: best, source: best === null ? null : ('data' as const), totals };
}

function poolTemperature(temperatureC: number, points: { id: string; k: number; se: number | null }[]) {
  const lnKs = points.map((point) => Math.log(point.k));
  if (points.length === 1) {
    const [point] = points as [(typeof points)[number]];
    return {
      temperatureC,
      k: point.k,
      kStandardError: point.se,
      lnK: lnKs[0] as number,
      seriesIds: [point.id],
      pooling: 'single-series' as const,
    };
  }
  const weighted = points.every((point) => point.se !== null && point.se > 0);
  const weights = points.map((point) => (weighted ? (point.k / (point.se as number)) ** 2 : 1));
  const totalWeight = weights.reduce((sum, weight) => sum + weight, 0);
  const lnK = lnKs.reduce((sum, value, index) => sum + (weights[index] as number) * value, 0) / totalWeight;
  const k = Math.exp(lnK);
  return {
    temperatureC,
    k,
    kStandardError: weighted ? k / Math.sqrt(totalWeight) : null,
    lnK,
    seriesIds: points.map((point) => point.id),
    pooling: weighted ? ('inverse-variance-mean-of-ln-k' as const) : ('mean-of-ln-k' as const),
  };
}

function datasetArrhenius(
  results: readonly SeriesResult[],
  seriesList: readonly Series[],
  options: DatasetOptions,
  warnings: DatasetWarning[],
): DatasetArrhenius | null {
  const temperatures = new Set(
    results.flatMap((result) => (result.temperatureC === null ? [] : [result.temperatureC])),
  );
  if (temperatures.size < 2) return null;
  const { order, source, totals } = commonOrder(results, options.order);
  const first = seriesList[0];
  const base: DatasetArrhenius = {
    order,
    orderSource: source,
    aiccTotals: totals,
    kUnit: order === null || !first ? null : rateConstantUnit(order, first.valueUnit, first.timeUnit),
    rateConstants: [],
    excludedSeries: [],
    fit: null,
    notApplicableReason: null,
    prediction: null,
  };
  if (order === null) {
    base.notApplicableReason =
      'no common reaction order: no series had enough points to compare the orders; fix the order to fit Arrhenius';
    return base;
  }
  const named = new Set(
    results.flatMap((result) =>
      result.analysis?.selectedOrder == null ? [] : [result.analysis.selectedOrder],
    ),
  );
  if (source === 'data' && [...named].some((other) => other !== order)) {
    warnings.push({
      code: 'order-disagreement',
      message: `Series name different orders (${[...named].sort().join(', ')}); the Arrhenius fit uses ${ORDER_WORDS[order]} order, lowest in summed AICc.`,
    });
  }
  const byTemperature = new Map<number, { id: string; k: number; se: number | null }[]>();
  for (const result of results) {
    if (result.temperatureC === null) {
      base.excludedSeries.push({ id: result.id, reason: 'no temperature given' });
      continue;
    }
    const model = result.analysis?.models.find((candidate) => candidate.order === order);
    if (!result.analysis || !model) {
      base.excludedSeries.push({ id: result.id, reason: result.error?.message ?? 'not analysed' });
    } else if (model.k === null || !model.applicable) {
      base.excludedSeries.push({
        id: result.id,
        reason: `the ${ORDER_WORDS[order]}-order law could not be fitted: ${model.reason ?? 'no k'}`,
      });
    } else if (!(model.k > 0)) {
      base.excludedSeries.push({
        id: result.id,
        reason: `k = ${model.k.toPrecision(3)} is not positive (no measurable loss), so ln k does not exist`,
      });
    } else {
      const list = byTemperature.get(result.temperatureC) ?? [];
      list.push({ id: result.id, k: model.k, se: model.kStandardError });
      byTemperature.set(result.temperatureC, list);
    }
  }
  base.rateConstants = [...byTemperature]
    .sort(([a], [b]) => a - b)
    .map(([temperatureC, points]) => poolTemperature(temperatureC, points));
  if (base.rateConstants.length < 2) {
    base.notApplicableReason = `rate constants at ${base.rateConstants.length} temperature(s) only; an Arrhenius line needs at least 2`;
    return base;
  }
  const fitted = kineticsFailure(() =>
    arrheniusFit(
      base.rateConstants.map((point) => ({
        temperatureC: point.temperatureC,
        rateConstant: point.k,
        ...(point.kStandardError === null ? {} : { rateConstantStandardError: point.kStandardError }),
      })),
      { weighting: options.arrheniusWeighting ?? 'unweighted', confidence: options.confidenceLevel ?? 0.95 },
    ),
  );
  if ('error' in fitted) {
    base.notApplicableReason = fitted.error.message;
    return base;
  }
  base.fit = fitted.value;
  if (options.storageTemperatureC !== undefined) {
    const storage = options.storageTemperatureC;
    const predicted = kineticsFailure(() => predictRateConstant(fitted.value, storage));
    if ('error' in predicted) {
      base.notApplicableReason = `k at ${storage} °C: ${predicted.error.message}`;
      return base;
    }
    const prediction = predicted.value;
    // A monotone decreasing function of k: the interval ends of k swap (docs/methods.md#arrhenius).
    const interval = prediction.confidenceInterval;
    const derived = (constant: number) => ({
      estimate: constant / prediction.rateConstant,
      ci: interval === null ? null : ([constant / interval[1], constant / interval[0]] as [number, number]),
    });
    base.prediction = {
      ...prediction,
      t90: order === 1 ? derived(Math.log(10 / 9)) : null,
      halfLife: order === 1 ? derived(Math.LN2) : null,
      derivedReason:
        order === 1
          ? null
          : `for ${ORDER_WORDS[order]} order, t90 and half-life depend on the initial value; see each series`,
    };
    if (prediction.extrapolation !== null) {
      const [low, high] = fitted.value.temperatureRangeC;
      warnings.push({
        code: 'arrhenius-extrapolation',
        message: `k at ${storage} °C is extrapolated outside the fitted ${low}–${high} °C; the straight Arrhenius line is an assumption there.`,
      });
    }
  }
  return base;
}

/** The declaration the Q1E proposals use: the study's statements, unknown where it states nothing. */
function resolvedDeclaration(options: DatasetOptions): Q1eDeclaration {
  const stated = options.q1e ?? {};
  return {
    ...UNSTATED_DECLARATION,
    ...Object.fromEntries(Object.entries(stated).filter(([, value]) => value !== undefined)),
    longTermTemperatureC: stated.longTermTemperatureC ?? options.storageTemperatureC ?? null,
  };
}

function attributeDirection(options: DatasetOptions): AttributeDirection {
  if (options.direction) return options.direction;
  if (options.lowerLimit !== undefined && options.upperLimit !== undefined) return 'either';
  return options.lowerLimit !== undefined ? 'decreasing' : 'increasing';
}

/** Replaces non-finite numbers by null, with one warning naming where. */
function finiteOnly<T>(value: T, warnings: DatasetWarning[]): T {
  const places: string[] = [];
  const visit = (item: unknown, where: string): unknown => {
    if (typeof item === 'number' && !Number.isFinite(item)) {
      places.push(where);
      return null;
    }
    if (Array.isArray(item)) return item.map((entry, index) => visit(entry, `${where}[${index}]`));
    if (item !== null && typeof item === 'object') {
      return Object.fromEntries(
        Object.entries(item).map(([key, entry]) => [key, visit(entry, `${where}.${key}`)]),
      );
    }
    return item;
  };
  const cleaned = visit(value, '') as T;
  if (places.length > 0) {
    warnings.push({
      code: 'non-finite-replaced',
      message: `Non-finite numbers were replaced by null at ${places.slice(0, 5).join(', ')}.`,
    });
  }
  return cleaned;
}

export function analyseDataset(seriesList: readonly Series[], options: DatasetOptions = {}): DatasetAnalysis {
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) {
    throw new KineticsError(
      'invalid-input',
      `The confidence level must lie between 0 and 1; got ${confidenceLevel}.`,
    );
  }
  const {
    storageTemperatureC: _storage,
    direction: _direction,
    arrheniusWeighting: _weighting,
    q1e: _declaration,
    ...seriesOptions
  } = options;
  const warnings: DatasetWarning[] = [];
  const results: SeriesResult[] = seriesList.map((series) => {
    const outcome = kineticsFailure(() => analyseSeries(series, seriesOptions));
    const result: SeriesResult = {
      id: series.id,
      batch: series.batch ?? null,
      temperatureC: series.temperatureC ?? null,
      analysis: 'value' in outcome ? outcome.value : null,
      error: 'error' in outcome ? { code: outcome.error.code, message: outcome.error.message } : null,
    };
    if (result.error)
      warnings.push({ code: 'series-not-analysed', message: `${series.id}: ${result.error.message}` });
    return result;
  });
  const arrhenius = datasetArrhenius(results, seriesList, options, warnings);
  const hasLimit = options.lowerLimit !== undefined || options.upperLimit !== undefined;
  const q1eDeclaration = hasLimit ? resolvedDeclaration(options) : null;
  const shelfLife =
    q1eDeclaration === null
      ? null
      : conditionShelfLives(
          results.map((result, index) => ({
            series: seriesList[index] as Series,
            namedOrder: result.analysis?.selectedOrder ?? null,
          })),
          {
            direction: attributeDirection(options),
            confidence: confidenceLevel,
            declaration: q1eDeclaration,
            ...(options.order === undefined ? {} : { order: options.order }),
            ...(options.lowerLimit === undefined ? {} : { lowerLimit: options.lowerLimit }),
            ...(options.upperLimit === undefined ? {} : { upperLimit: options.upperLimit }),
          },
        );
  const partial = {
    engineVersion: ENGINE_VERSION,
    confidenceLevel,
    series: results,
    arrhenius,
    shelfLife,
    q1eDeclaration,
    warnings,
  };
  const cleaned = finiteOnly(partial, warnings);
  return { ...cleaned, warnings, methodStatement: methodStatement(cleaned, seriesList, options) };
}
