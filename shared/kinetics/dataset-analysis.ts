import type { KineticsErrorCode } from './numeric/kinetics-error.ts';
import type { SeriesAnalysis, SeriesOptions } from './series-analysis.ts';
import type { ConditionShelfLife } from './stability/condition-shelf-lives.ts';
import type { Q1eDeclaration } from './stability/q1e-declaration.ts';
import type { ArrheniusFit } from './temperature/arrhenius-fit.ts';
import type { EyringFit } from './temperature/eyring-fit.ts';
import type { RateConstantPrediction } from './temperature/predict-rate-constant.ts';
import type { TemperatureFitWeighting } from './temperature/rate-constant-measurement.ts';
import type { AttributeDirection, ErrorModel, IntegerOrder } from './types.ts';

/* The options and findings of `analyseDataset` (analyse-dataset.ts), apart from the computation so that
   the method statement can describe them without importing the analysis. */

export interface DatasetOptions extends Omit<SeriesOptions, 'errorModel'> {
  errorModel?: 'auto' | ErrorModel;
  /** Temperature (°C) at which k is predicted from the Arrhenius fit. */
  storageTemperatureC?: number;
  /** Direction of the attribute for Q1E; by default from the limits given. */
  direction?: AttributeDirection;
  arrheniusWeighting?: TemperatureFitWeighting;
  /**
   * What the study declares for the ICH Q1E extrapolation limit. Anything left out is unknown and
   * takes the most conservative branch; the long-term condition defaults to `storageTemperatureC`.
   */
  q1e?: Partial<Q1eDeclaration>;
}

export interface SeriesResult {
  id: string;
  batch: string | null;
  temperatureC: number | null;
  analysis: SeriesAnalysis | null;
  error: { code: KineticsErrorCode; message: string } | null;
}

export interface TemperatureRateConstant {
  temperatureC: number;
  k: number;
  kStandardError: number | null;
  lnK: number;
  seriesIds: string[];
  pooling: 'single-series' | 'inverse-variance-mean-of-ln-k' | 'mean-of-ln-k';
}

export interface DatasetArrhenius {
  order: IntegerOrder | null;
  /**
   * 'analyst': fixed; 'study': the study's working order (no series named one); 'data': lowest
   * summed AICc; 'formation': zero order by rule, because the attribute increases (`rateSense`).
   */
  orderSource: 'analyst' | 'data' | 'study' | 'formation' | null;
  /**
   * Which rate the line is fitted to. 'loss': k of the rate law −dC/dt = k·Cⁿ (the attribute
   * falls). 'formation': with `direction: 'increasing'`, the zero-order formation rate
   * dC/dt = −k₀ > 0 (value unit per time unit) of an attribute that rises (a degradation product,
   * water); `rateConstants[].k`, the fit and the prediction are then of that rate. Absent in
   * results stored before engine 0.4.0, which are all 'loss'.
   */
  rateSense: 'loss' | 'formation';
  /** Summed AICc of orders 0, 1, 2 over the series where all three were compared. */
  aiccTotals: [number | null, number | null, number | null];
  kUnit: string | null;
  rateConstants: TemperatureRateConstant[];
  excludedSeries: { id: string; reason: string }[];
  fit: ArrheniusFit | null;
  /** Eyring line through the same rate constants (ΔH‡, ΔS‡); null when there is no Arrhenius fit. */
  eyring: { fit: EyringFit | null; notApplicableReason: string | null } | null;
  /**
   * Q10 implied by Ea over fromC → fromC + 10 °C, fromC the storage temperature (else the lowest
   * tested one); the interval is Ea's interval carried through (Q10 rises with Ea). Null without a fit.
   */
  q10: { fromC: number; toC: number; estimate: number; interval: [number, number] | null } | null;
  notApplicableReason: string | null;
  prediction:
    | (RateConstantPrediction & {
        t90: { estimate: number; ci: [number, number] | null } | null;
        halfLife: { estimate: number; ci: [number, number] | null } | null;
        derivedReason: string | null;
      })
    | null;
}

export type { ConditionShelfLife };

export interface DatasetWarning {
  code:
    | 'series-not-analysed'
    | 'order-disagreement'
    | 'no-order-named'
    | 'arrhenius-extrapolation'
    | 'non-finite-replaced';
  message: string;
}

/** The result of `analyseDataset` before its method statement is written. */
export interface DatasetFindings {
  engineVersion: string;
  confidenceLevel: number;
  series: SeriesResult[];
  arrhenius: DatasetArrhenius | null;
  shelfLife: ConditionShelfLife[] | null;
  /** The Q1E declaration the shelf-life proposals used, unknowns included; null without a limit. */
  q1eDeclaration: Q1eDeclaration | null;
  warnings: DatasetWarning[];
}
