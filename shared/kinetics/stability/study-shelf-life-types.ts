import type { StudyAttribute } from './study-attributes.ts';

/**
 * The shapes of a multi-attribute study's verdict, stored with an analysis run (the functions that
 * compute them are `study-shelf-life.ts` and `mass-balance.ts`). ICH Q1E Appendix A: each
 * attribute is evaluated separately and the shortest shelf life governs.
 */

/** One attribute's outcome at the long-term condition, as the study verdict lists it. */
export interface AttributeShelfLife {
  attribute: StudyAttribute;
  /** Proposed shelf life in the data's time unit (`timeUnit`); null when the attribute proposes none. */
  proposedShelfLife: number | null;
  proposedShelfLifeMonths: number | null;
  timeUnit: string;
  /** Why there is no proposal; null when there is one. */
  reason: string | null;
  /** The attribute's Q1E outcome in plain words (its long-term proposal statement). */
  statement: string;
  /** This attribute sets the study's shelf life (ties: every attribute at the minimum is limiting). */
  limiting: boolean;
}

/** The study's proposed shelf life: the earliest across attributes, and which attribute sets it. */
export interface StudyShelfLife {
  attributes: AttributeShelfLife[];
  /** Names of the limiting attributes (more than one on a tie); empty when no shelf life is proposed. */
  limitingAttributes: string[];
  proposedShelfLife: number | null;
  proposedShelfLifeMonths: number | null;
  timeUnit: string;
  /** Why the study proposes none (e.g. an attribute without a proposal); null when it proposes one. */
  reason: string | null;
  /** One sentence for the screen, the report and the method statement. */
  statement: string;
}

/** Assay plus degradation products at one pull of one batch and condition. */
export interface MassBalancePoint {
  time: number;
  assay: number;
  degradants: number;
  total: number;
  /** `total` as a percentage of the series' initial total (the first pull). */
  percentOfInitial: number;
}

/** The mass balance of one batch at one condition, with its trend (least-squares slope over time). */
export interface MassBalanceSeries {
  batch: string | null;
  temperatureC: number | null;
  points: MassBalancePoint[];
  /** Slope of `percentOfInitial` per time unit, with its two-sided confidence interval; null below 3 pulls. */
  trend: { slope: number; lower: number; upper: number; confidenceLevel: number } | null;
}

/** The mass-balance check of a run, or why it could not be made. */
export interface MassBalance {
  assayAttribute: string;
  degradantAttributes: string[];
  unit: string;
  timeUnit: string;
  series: MassBalanceSeries[];
  statement: string;
}
