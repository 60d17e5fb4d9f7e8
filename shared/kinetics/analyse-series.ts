import { collectWarnings } from './derived/analysis-warnings.ts';
import { finiteOnly } from './derived/finite-only.ts';
import { type DerivedFigure, derivedFigure, modelSummary } from './derived/model-summary.ts';
import { type PredictedValue, predictedValue } from './derived/predicted-value.ts';
import { negativeValueReason, refuseFixedOrderWithNegativeValue } from './negative-values.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import { chooseErrorModel, type ErrorModelChoice } from './order/choose-error-model.ts';
import { fitRateLaw, type RateLawFit, type RateLawModel } from './order/fit-rate-law.ts';
import { linearisedFits } from './order/linearised-fits.ts';
import { prepareSeries } from './order/prepare-series.ts';
import { residualDiagnostics } from './order/residual-diagnostics.ts';
import { type ModelFits, type OrderSelection, selectOrder } from './order/select-order.ts';
import { startingValues } from './order/starting-values.ts';
import { plausibleLawFigures } from './plausible-law-figures.ts';
import type { SeriesAnalysis, SeriesOptions } from './series-analysis.ts';
import {
  analysisInOriginalUnits,
  predictionsInOriginalUnits,
  scaledOptions,
  seriesScaling,
} from './series-scaling.ts';
import type { ErrorModel, IntegerOrder, Series } from './types.ts';

/**
 * Analyses one degradation series: linearised plots, nonlinear fits of the integrated rate laws of order
 * 0, 1, 2 and a free order n, the order decision (which abstains when the evidence is thin), the rate
 * constant with its interval, half-life, t90, time to specification limits, predicted values, residual
 * diagnostics and warnings — as one JSON-serialisable object (no NaN or Infinity; null = not estimable).
 *
 * Convention: −dC/dt = k·Cⁿ (k > 0 for a falling value; unit valueUnit^(1−n)/timeUnit). Steps: prepare the
 * points (`prepare-series.ts`); fit the straight-line plots (`linearised-fits.ts`); choose the error model
 * (`choose-error-model.ts`) unless the caller fixes it; fit the four laws on the original scale
 * (`fit-rate-law.ts`); decide the order (`select-order.ts`); report the derived figures of the named order,
 * or of the analyst's order when `options.order` is set (as is done in ICH shelf-life work), else none.
 *
 * Reference: docs/methods.md (method, laws and sources); each step's file names its own sources.
 *
 * Throws `KineticsError`: 'too-few-points' (fewer than 3 usable points), 'single-time' (all at one time),
 * 'invalid-input' (non-finite numbers, confidence level outside (0, 1), exclusion without reason),
 * 'non-positive-value' (caller asked for proportional error with a value ≤ 0). A law that cannot be fitted
 * is reported as not applicable with its reason instead.
 *
 * Example: the N2O5 series of Eyring & Daniels (1930; docs/methods.md#worked-examples) gives
 * selectedOrder 1, k = 6.213e-4 1/s, half-life 1116 s.
 */

export type { AnalysisWarning, SeriesAnalysis, SeriesOptions } from './series-analysis.ts';

const MODELS: readonly RateLawModel[] = [0, 1, 2, 'n'];

export function analyseSeries(series: Series, options: SeriesOptions = {}): SeriesAnalysis {
  return analyse(series, options, undefined).analysis;
}

/**
 * The mean-curve band of a series' chosen law (the reported order, else the best integer order by
 * AICc) at `points` even times across the observed span, computed from the analysis' own fit
 * (issue 16): the same numbers as analysing the series again with that order fixed and
 * `predictAt` on the grid, since fixing the order changes no fit. Null where that second analysis
 * would refuse (a fixed order 1 or 2 with a negative value) or the series names no order;
 * `predictions` is empty where the chosen law could not be fitted.
 */
export interface FirstFitBand {
  order: IntegerOrder;
  predictions: PredictedValue[];
}

/** `analyseSeries`, and the band of its chosen law from the same fit (see `FirstFitBand`). */
export function analyseSeriesWithBand(
  series: Series,
  options: SeriesOptions,
  bandPoints: number,
): { analysis: SeriesAnalysis; band: FirstFitBand | null } {
  return analyse(series, options, bandPoints);
}

function analyse(
  series: Series,
  options: SeriesOptions,
  bandPoints: number | undefined,
): { analysis: SeriesAnalysis; band: FirstFitBand | null } {
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) {
    throw new KineticsError(
      'invalid-input',
      `The confidence level must lie between 0 and 1; got ${confidenceLevel}.`,
    );
  }
  for (const [name, value] of [
    ['lowerLimit', options.lowerLimit],
    ['upperLimit', options.upperLimit],
    ...(options.predictAt ?? []).map((time) => ['predictAt', time] as const),
  ] as const) {
    if (value !== undefined && !Number.isFinite(value)) {
      throw new KineticsError('invalid-input', `${name} must be a finite number; got ${value}.`, {
        name,
        value,
      });
    }
  }
  const prepared = prepareSeries(series);
  refuseFixedOrderWithNegativeValue(series.id, options.order, prepared.values, prepared.labelOf);
  const negative = (model: 1 | 2 | 'n') => negativeValueReason(model, prepared.values, prepared.labelOf);
  // Extreme magnitudes are fitted divided by powers of two and mapped back (series-scaling.ts).
  const scaling = seriesScaling(prepared.times, prepared.values);
  const times = Float64Array.from(prepared.times, (time) => time / scaling.time);
  const values = Float64Array.from(prepared.values, (value) => value / scaling.value);
  const unscaledOptions = options;
  options = scaledOptions(options, scaling);
  const pointCount = times.length;
  const lastTime = times[pointCount - 1]!;
  let largestValue = values[0]!;
  for (const value of values) if (value > largestValue) largestValue = value;
  const linearised = linearisedFits(times, values, prepared.labelOf);
  const allPositive = values.every((value) => value > 0);

  const fits: (RateLawFit | null)[] = [null, null, null, null];
  const failures: (string | undefined)[] = [undefined, undefined, undefined, undefined];
  const fitIntegers = (errorModel: ErrorModel): void => {
    for (const order of [0, 1, 2] as IntegerOrder[]) {
      const refused = order === 0 ? null : negative(order);
      if (refused !== null) {
        failures[order] = refused;
        continue;
      }
      const start = startingValues(order, linearised, largestValue);
      [fits[order], failures[order]] = attempt(() => fitRateLaw(order, times, values, errorModel, start));
    }
  };
  const requested = options.errorModel ?? 'auto';
  let errorModelChoice: ErrorModelChoice;
  if (requested === 'auto') {
    fitIntegers('constant');
    const bestConstant = lowestRss(fits);
    const proportional =
      bestConstant === null || !allPositive
        ? null
        : attempt(() =>
            fitRateLaw(bestConstant.model, times, values, 'proportional', {
              initialValue: bestConstant.initialValue,
              rateConstant: bestConstant.rateConstant,
            }),
          )[0];
    errorModelChoice =
      bestConstant === null
        ? { ...chooseErrorModel(fits[0]!, null), reason: 'no law could be fitted' }
        : chooseErrorModel(bestConstant, proportional);
    if (!allPositive)
      errorModelChoice.reason = 'some values are not positive, so only constant error can be fitted';
    if (errorModelChoice.errorModel === 'proportional' && bestConstant !== null && proportional !== null) {
      // Refit the other laws on the log scale from their constant-error answers; the best one is already done.
      for (const order of [0, 1, 2] as IntegerOrder[]) {
        const constantFit = fits[order] ?? null;
        if (order === bestConstant.model) {
          fits[order] = proportional;
          continue;
        }
        const start =
          constantFit === null
            ? startingValues(order, linearised, largestValue)
            : { initialValue: constantFit.initialValue, rateConstant: constantFit.rateConstant };
        [fits[order], failures[order]] = attempt(() =>
          fitRateLaw(order, times, values, 'proportional', start),
        );
      }
    }
  } else {
    if (requested === 'proportional' && !allPositive) {
      const index = values.findIndex((value) => !(value > 0));
      throw new KineticsError(
        'non-positive-value',
        `Proportional error is fitted on ln(value), but ${prepared.labelOf(index)} has value ${prepared.values[index]}.`,
        { id: series.id, index, value: prepared.values[index] },
      );
    }
    fitIntegers(requested);
    errorModelChoice = {
      errorModel: requested,
      source: 'caller',
      logLikelihoodConstant: null,
      logLikelihoodProportional: null,
      reason: 'set by the caller',
    };
  }
  const errorModel = errorModelChoice.errorModel;
  const bestInteger = lowestRss(fits);
  if (negative('n') !== null) {
    failures[3] = negative('n')!;
  } else if (bestInteger !== null && bestInteger.rateConstant <= 0) {
    // The values do not fall (a degradation product, water): the rate laws describe a loss, and
    // the free order of a rising series has no meaning — from a start near zero its fit drifts
    // towards C0 → 0 and runs to the iteration limit. Not fitted; the integer orders still are.
    failures[3] = 'the values do not fall over time, so the free order n, a law of loss, is not fitted';
  } else if (bestInteger !== null) {
    [fits[3], failures[3]] = attempt(() =>
      fitRateLaw('n', times, values, errorModel, {
        initialValue: bestInteger.initialValue,
        rateConstant: bestInteger.rateConstant,
        n: bestInteger.n,
      }),
    );
  } else {
    failures[3] = 'no integer-order law could be fitted to start from';
  }

  const selection = selectOrder(
    fits as unknown as ModelFits,
    times,
    values,
    confidenceLevel,
    series.valueUnit,
  );
  const units = { valueUnit: series.valueUnit, timeUnit: series.timeUnit };
  const models = MODELS.map((model, index) =>
    modelSummary(
      model,
      fits[index]!,
      failures[index],
      selection.aicc[index]!,
      selection.weights[index]!,
      units,
      confidenceLevel,
      lastTime,
    ),
  );

  // The study's working order stands in only where the data name none (issue 12 §3).
  const useWorkingOrder =
    options.order === undefined && selection.selectedOrder === null && options.workingOrder !== undefined;
  const orderSource = options.order !== undefined ? 'analyst' : useWorkingOrder ? 'study' : 'data';
  const reportedOrder =
    options.order ?? (useWorkingOrder ? options.workingOrder!.order : selection.selectedOrder);
  const reportedFit = reportedOrder === null ? null : fits[reportedOrder]!;
  const diagnosticFit =
    reportedFit ?? (selection.bestIntegerOrder === null ? null : fits[selection.bestIntegerOrder]!);
  const diagnostics = diagnosticFit === null ? null : residualDiagnostics(diagnosticFit, times, values);
  const figure = (level: { fractionRemaining: number } | { value: number }): DerivedFigure | null =>
    reportedFit === null
      ? null
      : derivedFigure(reportedFit, level, confidenceLevel, series.timeUnit, lastTime);

  const analysis: SeriesAnalysis = {
    id: series.id,
    timeUnit: series.timeUnit,
    valueUnit: series.valueUnit,
    n: pointCount,
    timeSpan: [times[0]!, lastTime],
    excluded: prepared.excluded,
    selectedOrder: reportedOrder,
    orderSource,
    verdict:
      orderSource === 'analyst'
        ? `Order fixed by the analyst: ${['zero', 'first', 'second'][options.order!]} order. What the data alone say: ${selection.verdict}`
        : orderSource === 'study'
          ? `Working order from the study: ${['zero', 'first', 'second'][reportedOrder!]} order (${options.workingOrder!.reason}), used because the data do not name one. What the data alone say: ${selection.verdict}`
          : selection.verdict,
    errorModel,
    errorModelChoice,
    fractionReacted: selection.fractionReacted,
    halfLivesCovered: selection.halfLivesCovered,
    models,
    linearized: linearised,
    selection: withoutVerdict(selection),
    reportedOrder,
    halfLife: figure({ fractionRemaining: 0.5 }),
    t90: figure({ fractionRemaining: 0.9 }),
    diagnostics,
    warnings: [],
    confidenceLevel,
  };
  if (orderSource === 'study') analysis.workingOrderReason = options.workingOrder!.reason;
  if (selection.selectedOrder === null) {
    analysis.plausible = plausibleLawFigures(
      models,
      fits,
      options,
      series.timeUnit,
      lastTime,
      confidenceLevel,
    );
  }
  if (reportedOrder === null) {
    analysis.derivedReason =
      'no order is named, so no single half-life or t90 is reported; each plausible law’s figures and the model averages are under plausible';
  } else if (reportedFit === null) {
    analysis.derivedReason = `the ${['zero', 'first', 'second'][reportedOrder]}-order law could not be fitted: ${failures[reportedOrder]}`;
  }
  if (options.lowerLimit !== undefined || options.upperLimit !== undefined) {
    analysis.timeToLimit = {};
    if (options.lowerLimit !== undefined) analysis.timeToLimit.lower = figure({ value: options.lowerLimit });
    if (options.upperLimit !== undefined) analysis.timeToLimit.upper = figure({ value: options.upperLimit });
  }
  if (options.predictAt !== undefined && reportedFit !== null) {
    analysis.predictions = options.predictAt.map((time) =>
      predictedValue(reportedFit, time, confidenceLevel),
    );
  }
  const original = analysisInOriginalUnits(analysis, fits, scaling);
  original.warnings = collectWarnings(original, selection, fits, unscaledOptions);
  const result = finiteOnly(original, original.diagnostics?.points);
  if (bandPoints === undefined) return { analysis: result, band: null };
  const bandOrder = result.reportedOrder ?? result.selection.bestIntegerOrder;
  if (
    bandOrder === null ||
    bandOrder === undefined ||
    negativeValueReason(bandOrder, prepared.values, prepared.labelOf) !== null
  )
    return { analysis: result, band: null };
  const [start, end] = result.timeSpan;
  const grid = Array.from({ length: bandPoints }, (_, i) => start + ((end - start) * i) / (bandPoints - 1));
  const bandFit = fits[bandOrder];
  const scaledGrid = scaledOptions({ predictAt: grid }, scaling).predictAt!;
  const predictions =
    bandFit === null || bandFit === undefined
      ? []
      : predictionsInOriginalUnits(
          scaledGrid.map((time) => predictedValue(bandFit, time, confidenceLevel)),
          scaling,
        );
  return { analysis: result, band: { order: bandOrder, predictions: finiteOnly(predictions, null) } };
}

function attempt(runFit: () => RateLawFit): [RateLawFit | null, string | undefined] {
  try {
    return [runFit(), undefined];
  } catch (error) {
    if (error instanceof KineticsError) return [null, error.message];
    throw error;
  }
}

function lowestRss(fits: readonly (RateLawFit | null)[]): RateLawFit | null {
  let best: RateLawFit | null = null;
  for (const fit of fits.slice(0, 3)) {
    if (fit !== null && (best === null || fit.residualSumOfSquares < best.residualSumOfSquares)) best = fit;
  }
  return best;
}

function withoutVerdict(selection: OrderSelection): SeriesAnalysis['selection'] {
  const { verdict: _verdict, selectedOrder: _selected, ...rest } = selection;
  return rest;
}
