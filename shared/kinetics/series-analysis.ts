import type { DerivedFigure, ModelSummary } from './derived/model-summary.ts';
import type { PredictedValue } from './derived/predicted-value.ts';
import type { ErrorModelChoice } from './order/choose-error-model.ts';
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
  orderSource: 'data' | 'analyst';
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
  diagnostics: ResidualDiagnostics | null;
  warnings: AnalysisWarning[];
  confidenceLevel: number;
}
