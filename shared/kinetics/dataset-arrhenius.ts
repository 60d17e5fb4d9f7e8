import type { DatasetArrhenius, DatasetOptions, DatasetWarning, SeriesResult } from './dataset-analysis.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import { arrheniusFit } from './temperature/arrhenius-fit.ts';
import { eyringFit } from './temperature/eyring-fit.ts';
import { predictRateConstant } from './temperature/predict-rate-constant.ts';
import { q10FromActivationEnergy } from './temperature/q10.ts';
import type { IntegerOrder, Series } from './types.ts';
import { rateConstantUnit, SECONDS_PER_TIME_UNIT, tryParseTimeUnit } from './units.ts';

/**
 * The temperature part of `analyseDataset`: one reaction order for every temperature, each series'
 * k of that order, batches at one temperature pooled, the Arrhenius line with k at the storage
 * temperature, and the Eyring line (ΔH‡, ΔS‡ with intervals) through the same rate constants.
 *
 * Rules (see `analyseDataset`): the order is the analyst's when fixed; else, when no series named
 * an order and the study declares a working order, that working order (source 'study'); else the
 * integer order with the lowest AICc summed over the series. When no series named an order the
 * rate constants rest on a comparison the data could not decide, and a warning says so.
 * Eyring: `eyringFit` on the pooled k, converted to s⁻¹ from the series' time unit (H. Eyring,
 * J. Chem. Phys. 3 (1935) 107; ΔH‡ = Ea − R·T for a unimolecular reaction in solution).
 *
 * An attribute that increases (`direction: 'increasing'`: a degradation product, water): the
 * rate laws −dC/dt = k·Cⁿ describe a loss, so its k is negative and has no logarithm. The line is
 * then fitted to the zero-order formation rate k_f = dC/dt = −k₀ (value unit per time unit), the
 * rate a laboratory extrapolates for a degradant's growth (`rateSense` 'formation', order 0,
 * `orderSource` 'formation'). First- and second-order laws with k < 0 are exponential or
 * hyperbolic growth from the attribute's own level, which is no law of formation: an analyst's
 * fixed order 1 or 2 is refused with the reason, and the study's working order does not enter.
 * 'decreasing' and 'either' fit k itself, as before (docs/methods.md#arrhenius).
 *
 * Throws nothing: every failure is a reason in the result.
 *
 * Example: first-order series at 25, 40, 50, 60 °C give `order` 1, four points, Ea, and
 * `eyring.enthalpyOfActivation.estimate` ≈ Ea − R·T̄. A degradant rising 0.05, 0.091, 0.285
 * and 0.829 % per month at 25, 30, 40 and 50 °C gives `rateSense` 'formation', order 0,
 * Ea = 90 kJ/mol and k_f(25 °C) = 0.05 % per month.
 */

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
function commonOrder(results: readonly SeriesResult[], fixed: IntegerOrder | undefined, fromStudy: boolean) {
  const totals: [number | null, number | null, number | null] = [null, null, null];
  for (const result of results) {
    const aicc = result.analysis?.selection.aicc;
    if (!aicc || aicc.slice(0, 3).some((value) => value === null || value === undefined)) continue;
    for (const order of [0, 1, 2] as const) totals[order] = (totals[order] ?? 0) + (aicc[order] as number);
  }
  if (fixed !== undefined)
    return { order: fixed, source: fromStudy ? ('study' as const) : ('analyst' as const), totals };
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

export function datasetArrhenius(
  results: readonly SeriesResult[],
  seriesList: readonly Series[],
  options: DatasetOptions,
  warnings: DatasetWarning[],
): DatasetArrhenius | null {
  const temperatures = new Set(
    results.flatMap((result) => (result.temperatureC === null ? [] : [result.temperatureC])),
  );
  if (temperatures.size < 2) return null;
  const named = new Set(
    results.flatMap((result) =>
      result.analysis?.selectedOrder == null || result.analysis.orderSource !== 'data'
        ? []
        : [result.analysis.selectedOrder],
    ),
  );
  const working = named.size === 0 && options.order === undefined ? options.workingOrder : undefined;
  const { order, source, totals } = commonOrder(
    results,
    options.order ?? working?.order,
    working !== undefined,
  );
  const first = seriesList[0];
  const base: DatasetArrhenius = {
    order,
    orderSource: source,
    rateSense: 'loss',
    aiccTotals: totals,
    kUnit: order === null || !first ? null : rateConstantUnit(order, first.valueUnit, first.timeUnit),
    rateConstants: [],
    excludedSeries: [],
    fit: null,
    eyring: null,
    q10: null,
    notApplicableReason: null,
    prediction: null,
  };
  if (options.direction === 'increasing')
    return formationArrhenius(base, results, seriesList, options, warnings);
  if (order === null) {
    base.notApplicableReason =
      'no common reaction order: no series had enough points to compare the orders; fix the order to fit Arrhenius';
    return base;
  }
  if (named.size === 0 && source !== 'analyst') {
    warnings.push({
      code: 'no-order-named',
      message:
        source === 'study'
          ? `No series named an order; the rate constants are of the study's working order (${ORDER_WORDS[order]} order: ${working?.reason ?? 'no reason given'}), not an order the data chose.`
          : `No series named an order; the rate constants are of ${ORDER_WORDS[order]} order only because it has the lowest summed AICc, which the data could not decide. Fix the order or declare the study's working order.`,
    });
  }
  if (source === 'data' && [...named].some((other) => other !== order)) {
    warnings.push({
      code: 'order-disagreement',
      message: `Series name different orders (${[...named].sort().join(', ')}); the Arrhenius fit uses ${ORDER_WORDS[order]} order, lowest in summed AICc.`,
    });
  }
  return fitAcrossTemperatures(base, results, seriesList, options, warnings);
}

/**
 * An increasing attribute: the zero-order formation rate −k₀ at every temperature, or the
 * refusal of an analyst's order 1 or 2 (their k < 0 describes growth from the attribute's own
 * level, not a formation rate).
 */
function formationArrhenius(
  base: DatasetArrhenius,
  results: readonly SeriesResult[],
  seriesList: readonly Series[],
  options: DatasetOptions,
  warnings: DatasetWarning[],
): DatasetArrhenius {
  const first = seriesList[0];
  const fixed = options.order;
  const order: IntegerOrder = fixed ?? 0;
  const formation: DatasetArrhenius = {
    ...base,
    order,
    orderSource: fixed === undefined ? 'formation' : 'analyst',
    rateSense: 'formation',
    kUnit: first ? rateConstantUnit(order, first.valueUnit, first.timeUnit) : null,
  };
  if (order !== 0) {
    formation.notApplicableReason = `the attribute increases, and the ${ORDER_WORDS[order]}-order law describes a loss (−dC/dt = k·C${order === 1 ? '' : '²'}), so its k is no formation rate; the Arrhenius fit of an increasing attribute uses the zero-order formation rate dC/dt: leave the order free or fix zero order`;
    return formation;
  }
  return fitAcrossTemperatures(formation, results, seriesList, options, warnings);
}

/** Each series' rate of the chosen order, pooled per temperature, the line and its prediction. */
function fitAcrossTemperatures(
  base: DatasetArrhenius,
  results: readonly SeriesResult[],
  seriesList: readonly Series[],
  options: DatasetOptions,
  warnings: DatasetWarning[],
): DatasetArrhenius {
  const order = base.order as IntegerOrder;
  const formation = base.rateSense === 'formation';
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
    } else if (formation && !(-model.k > 0)) {
      base.excludedSeries.push({
        id: result.id,
        reason: `the formation rate dC/dt = ${(-model.k).toPrecision(3)} is not positive (no measurable increase), so its logarithm does not exist`,
      });
    } else if (!formation && !(model.k > 0)) {
      base.excludedSeries.push({
        id: result.id,
        reason: `k = ${model.k.toPrecision(3)} is not positive (no measurable loss), so ln k does not exist`,
      });
    } else {
      const list = byTemperature.get(result.temperatureC) ?? [];
      // The formation rate of an increasing attribute is −k₀; its standard error is k₀'s.
      list.push({ id: result.id, k: formation ? -model.k : model.k, se: model.kStandardError });
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
  base.eyring = eyringOf(base, seriesList, options);
  base.q10 = q10Of(fitted.value, options.storageTemperatureC);
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
      derivedReason: formation
        ? 'a formation rate (the attribute increases): t90 and half-life do not apply; at this temperature the level grows by the rate times the storage time'
        : order === 1
          ? null
          : `for ${ORDER_WORDS[order]} order, t90 and half-life depend on the initial value; see each series`,
    };
    if (prediction.extrapolation !== null) {
      const [low, high] = fitted.value.temperatureRangeC;
      warnings.push({
        code: 'arrhenius-extrapolation',
        message: `${formation ? 'The formation rate' : 'k'} at ${storage} °C is extrapolated outside the fitted ${low}–${high} °C; the straight Arrhenius line is an assumption there.`,
      });
    }
  }
  return base;
}

/** The Eyring fit through the pooled rate constants, or why there is none. */
function eyringOf(
  arrhenius: DatasetArrhenius,
  seriesList: readonly Series[],
  options: DatasetOptions,
): DatasetArrhenius['eyring'] {
  const timeUnit = tryParseTimeUnit(seriesList[0]?.timeUnit ?? '');
  if (timeUnit === null || seriesList.some((series) => tryParseTimeUnit(series.timeUnit) !== timeUnit)) {
    return {
      fit: null,
      notApplicableReason:
        'the time unit is not one of s, min, h, d, week, month, year for every series, so k cannot be converted to s⁻¹',
    };
  }
  const fitted = kineticsFailure(() =>
    eyringFit(
      arrhenius.rateConstants.map((point) => ({
        temperatureC: point.temperatureC,
        rateConstant: point.k,
        ...(point.kStandardError === null ? {} : { rateConstantStandardError: point.kStandardError }),
      })),
      {
        secondsPerTimeUnit: SECONDS_PER_TIME_UNIT[timeUnit],
        weighting: options.arrheniusWeighting ?? 'unweighted',
        confidence: options.confidenceLevel ?? 0.95,
      },
    ),
  );
  return 'error' in fitted
    ? { fit: null, notApplicableReason: fitted.error.message }
    : { fit: fitted.value, notApplicableReason: null };
}

/**
 * Q10 over θ → θ + 10 °C implied by the Arrhenius activation energy:
 * ln Q10 = (Ea/R)·(1/T₁ − 1/T₂) with T₂ = T₁ + 10 K (van 't Hoff 1884). θ is the storage
 * temperature when one is stated, else the lowest tested temperature. Q10 increases with Ea, so
 * its interval is the Q10 of each end of Ea's interval. A screen only: Q10 drifts with temperature.
 *
 * Example: Ea = 83.144 kJ/mol from 25 °C gives Q10 = 2.97.
 */
function q10Of(
  fit: NonNullable<DatasetArrhenius['fit']>,
  storageTemperatureC: number | undefined,
): DatasetArrhenius['q10'] {
  const fromC = storageTemperatureC ?? fit.temperatureRangeC[0];
  const result = kineticsFailure(() => ({
    estimate: q10FromActivationEnergy(fit.activationEnergy, fromC),
    interval:
      fit.activationEnergyInterval === null
        ? null
        : ([
            q10FromActivationEnergy(fit.activationEnergyInterval[0], fromC),
            q10FromActivationEnergy(fit.activationEnergyInterval[1], fromC),
          ] as [number, number]),
  }));
  return 'error' in result ? null : { fromC, toC: fromC + 10, ...result.value };
}
