import type { DerivedFigure, ModelSummary } from './derived/model-summary.ts';
import type { PredictedValue } from './derived/predicted-value.ts';
import type { ModelAveragedFigure } from './model-averaging.ts';
import type { ErrorModelChoice } from './order/choose-error-model.ts';
import type { RateLawModel } from './order/fit-rate-law.ts';
import type { LinearisedFit } from './order/linearised-fits.ts';
import type { OrderSelection } from './order/order-selection.ts';
import type { ExcludedPoint } from './order/prepare-series.ts';
import type { ResidualDiagnostics } from './order/residual-diagnostics.ts';
import type { ErrorModel, IntegerOrder } from './types.ts';

/* The options and result of `analyseSeries` (analyse-series.ts), kept apart from the computation so that
   the modules the analysis calls can name these types without importing the analysis itself. */

export interface SeriesOptions {
  confidenceLevel?: number;
  errorModel?: 'auto' | ErrorModel;
  lowerLimit?: number;
  upperLimit?: number;
  predictAt?: number[];
  order?: IntegerOrder;
  /**
   * The working order the study declares (its protocol's, with the reason), used only where the
   * data do not name an order; reported as "working order from the study", never "chosen".
   */
  workingOrder?: { order: IntegerOrder; reason: string };
}

/** One plausible law's own figures (Akaike weight ≥ 0.1 or ΔAICc ≤ 2), as the table shows them. */
export interface PlausibleLaw {
  model: RateLawModel;
  weight: number | null;
  deltaAicc: number | null;
  k: number | null;
  kCi95: [number, number] | null;
  kUnit: string;
  halfLife: DerivedFigure | null;
  t90: DerivedFigure | null;
  timeToLimit?: { lower?: DerivedFigure | null; upper?: DerivedFigure | null };
}

/**
 * When the data name no order: each plausible law's figures, their range, and the model averages
 * of what means the same under every law (t90, time to a limit, predicted values) — never k.
 */
export interface PlausibleLawFigures {
  laws: PlausibleLaw[];
  range: {
    halfLife: [number, number] | null;
    t90: [number, number] | null;
    timeToLimit?: { lower?: [number, number] | null; upper?: [number, number] | null };
  };
  modelAveraged: {
    t90: ModelAveragedFigure;
    timeToLimit?: { lower?: ModelAveragedFigure; upper?: ModelAveragedFigure };
    predictions?: ({ time: number } & ModelAveragedFigure)[];
  };
}

export interface AnalysisWarning {
  code:
    | 'low-fraction-reacted'
    | 'order-not-identified'
    | 'analyst-order-disfavoured'
    | 'possible-outliers'
    | 'systematic-misfit'
    | 'not-converged'
    | 'extrapolation';
  message: string;
}

export interface SeriesAnalysis {
  id: string;
  timeUnit: string;
  valueUnit: string;
  n: number;
  timeSpan: [number, number];
  excluded: ExcludedPoint[];
  selectedOrder: IntegerOrder | null;
  /** Who named `reportedOrder`: the data, the analyst (fixed order), or the study's working order. */
  orderSource: 'data' | 'analyst' | 'study';
  /** The study's reason for its working order, when `orderSource` is 'study'. */
  workingOrderReason?: string;
  verdict: string;
  errorModel: ErrorModel;
  errorModelChoice: ErrorModelChoice;
  fractionReacted: number | null;
  halfLivesCovered: number | null;
  models: ModelSummary[];
  linearized: LinearisedFit[];
  selection: Omit<OrderSelection, 'verdict' | 'selectedOrder'>;
  /** Derived figures of the reported order (the named or the analyst's order); null otherwise. */
  reportedOrder: IntegerOrder | null;
  halfLife: DerivedFigure | null;
  t90: DerivedFigure | null;
  derivedReason?: string;
  timeToLimit?: { lower?: DerivedFigure | null; upper?: DerivedFigure | null };
  predictions?: PredictedValue[];
  /** Present when the data name no order (`selection` abstained): the plausible laws and averages. */
  plausible?: PlausibleLawFigures;
  diagnostics: ResidualDiagnostics | null;
  warnings: AnalysisWarning[];
  confidenceLevel: number;
}
