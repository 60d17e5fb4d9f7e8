/**
 * Public entry of the kinetics engine: what the server, the islands and the command line import.
 * Anything not exported here is internal and may change without notice.
 *
 * Example: `import { analyseDataset, ENGINE_VERSION } from '../shared/kinetics/index.ts'`.
 */

export {
  analyseDataset,
  type ConditionShelfLife,
  type DatasetAnalysis,
  type DatasetArrhenius,
  type DatasetOptions,
  type DatasetWarning,
  type SeriesResult,
  type TemperatureRateConstant,
} from './analyse-dataset.ts';
// One series and a whole data set.
export {
  type AnalysisWarning,
  analyseSeries,
  type SeriesAnalysis,
  type SeriesOptions,
} from './analyse-series.ts';
export type { DerivedFigure, ModelSummary } from './derived/model-summary.ts';
export { type MethodStatement, methodStatement } from './method-statement.ts';
export { KineticsError, type KineticsErrorCode } from './numeric/kinetics-error.ts';
// ICH Q1E stability evaluation.
export {
  type PoolabilityResult,
  poolability,
  Q1E_POOLABILITY_SIGNIFICANCE,
} from './stability/poolability.ts';
export {
  type Q1eExtrapolationCase,
  type Q1eExtrapolationLimit,
  q1eExtrapolationLimit,
} from './stability/q1e-extrapolation-limit.ts';
export { type Q1eShelfLife, type Q1eShelfLifeOptions, q1eShelfLife } from './stability/q1e-shelf-life.ts';
export type { StabilityBatch, StabilityTransform } from './stability/stability-batch.ts';
// Temperature dependence.
export { type ArrheniusFit, type ArrheniusFitOptions, arrheniusFit } from './temperature/arrhenius-fit.ts';
export { type EyringFit, type EyringFitOptions, eyringFit } from './temperature/eyring-fit.ts';
export {
  type MeanKineticTemperature,
  type MeanKineticTemperatureOptions,
  meanKineticTemperature,
} from './temperature/mean-kinetic-temperature.ts';
export { MOLAR_GAS_CONSTANT } from './temperature/physical-constants.ts';
export { predictRateConstant, type RateConstantPrediction } from './temperature/predict-rate-constant.ts';
export { activationEnergyFromQ10, q10FromActivationEnergy, q10FromRateConstants } from './temperature/q10.ts';
export type {
  RateConstantMeasurement,
  TemperatureFitWeighting,
} from './temperature/rate-constant-measurement.ts';
// Input vocabulary and the one error type.
export type { AttributeDirection, ErrorModel, IntegerOrder, Observation, Series } from './types.ts';
// Units.
export {
  celsiusToKelvin,
  convertTime,
  DAYS_PER_MONTH,
  DAYS_PER_YEAR,
  KELVIN_AT_ZERO_CELSIUS,
  parseTimeUnit,
  rateConstantUnit,
  SECONDS_PER_TIME_UNIT,
  type TemperatureUnit,
  TIME_UNITS,
  type TimeUnit,
  toCelsius,
  tryParseTemperatureUnit,
  tryParseTimeUnit,
} from './units.ts';
export { ENGINE_VERSION } from './version.ts';
