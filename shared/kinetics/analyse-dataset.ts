import { analyseSeries, analyseSeriesWithBand, type FirstFitBand } from './analyse-series.ts';
import type { DatasetFindings, DatasetOptions, DatasetWarning, SeriesResult } from './dataset-analysis.ts';
import { datasetArrhenius } from './dataset-arrhenius.ts';
import { type MethodStatement, methodStatement } from './method-statement.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import type { SeriesAnalysis, SeriesOptions } from './series-analysis.ts';
import { conditionShelfLives } from './stability/condition-shelf-lives.ts';
import { type Q1eDeclaration, UNSTATED_DECLARATION } from './stability/q1e-declaration.ts';
import type { AttributeDirection, Series } from './types.ts';
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
 *   study's working order (`workingOrder`) when no series named one, labelled as such; else the
 *   integer order with the lowest AICc summed over the series where all three were compared —
 *   the AICc of the joint model with each series' own C0 and k, since log-likelihoods of
 *   independent series add. Each series gives k of that order; a k that is missing or ≤ 0 (no
 *   measurable loss) leaves that series out with the reason. Batches at one temperature are
 *   pooled into one point: the mean of ln k weighted by 1/Var(ln k) = (k/se(k))² (plain mean when
 *   a standard error is missing), so each temperature counts once in the line. The fit is
 *   unweighted unless `arrheniusWeighting: 'inverse-variance'`. An Eyring line (ΔH‡, ΔS‡) goes
 *   through the same points (`dataset-arrhenius.ts`). When no series named an order, a warning
 *   says the rate constants rest on an order the data did not decide. With `direction:
 *   'increasing'` the line is fitted to the zero-order formation rate −k₀ instead (`rateSense`
 *   'formation'; an analyst's order 1 or 2 is refused with the reason).
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

function kineticsFailure<T>(compute: () => T): { value: T } | { error: KineticsError } {
  try {
    return { value: compute() };
  } catch (error) {
    if (error instanceof KineticsError) return { error };
    throw error;
  }
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

/** True when a non-finite number lies anywhere inside (a walk that copies and names nothing). */
function holdsNonFinite(item: unknown): boolean {
  if (typeof item === 'number') return !Number.isFinite(item);
  if (Array.isArray(item)) return item.some(holdsNonFinite);
  if (item !== null && typeof item === 'object') return Object.values(item).some(holdsNonFinite);
  return false;
}

/**
 * Replaces non-finite numbers by null, with one warning naming where. The usual result holds
 * none and is returned as it is; only a result that holds one is copied with its places named
 * (copying every result cost a tenth of a 10,000-series run in allocation and collection).
 */
function finiteOnly<T>(value: T, warnings: DatasetWarning[]): T {
  if (!holdsNonFinite(value)) return value;
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
  return analyseWith(seriesList, options, analyseSeries);
}

/**
 * `analyseDataset`, and for each series the band of its chosen law from the same fit
 * (`analyseSeriesWithBand`; null for a series not analysed or naming no order), in series order.
 */
export function analyseDatasetWithBands(
  seriesList: readonly Series[],
  options: DatasetOptions,
  bandPoints: number,
): { analysis: DatasetAnalysis; bands: (FirstFitBand | null)[] } {
  const bands: (FirstFitBand | null)[] = seriesList.map(() => null);
  let index = 0;
  const analysis = analyseWith(seriesList, options, (series, seriesOptions) => {
    const position = index++;
    const outcome = analyseSeriesWithBand(series, seriesOptions, bandPoints);
    bands[position] = outcome.band;
    return outcome.analysis;
  });
  return { analysis, bands };
}

function analyseWith(
  seriesList: readonly Series[],
  options: DatasetOptions,
  analyse: (series: Series, options: SeriesOptions) => SeriesAnalysis,
): DatasetAnalysis {
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
    const outcome = kineticsFailure(() => analyse(series, seriesOptions));
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
            // Only an order the data named; a working order does not set the Q1E scale.
            namedOrder:
              result.analysis?.orderSource === 'study' ? null : (result.analysis?.selectedOrder ?? null),
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
