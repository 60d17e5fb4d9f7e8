/**
 * Input vocabulary of the kinetics engine, shared by every module in `shared/kinetics/`.
 * Pure data: no I/O, no classes. Results are typed next to the function that produces them.
 */

/** One measured point of a series. Several observations at the same time are replicates. */
export interface Observation {
  /** Elapsed time since the first sample, in the series' time unit. */
  time: number;
  /** Measured value (assay, concentration, impurity level) in the series' value unit. */
  value: number;
  /** Set when the analyst excluded this point; the reason is mandatory and printed in the method statement. */
  excluded?: { reason: string };
  /** Where the point came from (1-based source row, cell reference), for error messages and audit. */
  source?: { row?: number; cell?: string };
  /**
   * Set when the cell reported a result below a reporting or quantitation limit ("<LOQ",
   * "< 0.05"): the cell's text as written, and the limit it states when it states one. `value` is
   * then that limit, or 0 when none is stated, and is never fitted as read: the study's rule for
   * censored values decides (`stability/study-attributes.ts`, applied before the engine runs).
   */
  censored?: { text: string; limit?: number };
}

/** A degradation series: one batch at one condition. */
export interface Series {
  id: string;
  observations: Observation[];
  /** Unit of `time`, e.g. 'month', 'd', 'h', 'min', 's', 'week'. */
  timeUnit: string;
  /** Unit of `value`, e.g. '% label claim', 'mg/mL'. */
  valueUnit: string;
  /** Storage temperature in degrees Celsius, when known. */
  temperatureC?: number;
  /** Batch (lot) identifier, when known. */
  batch?: string;
  /**
   * The study attribute the series measures ("Assay", "Impurity B"), whenever the column mapping
   * names attributes; absent when it names none (every dataset imported before attributes were
   * listed), and then every series measures the study's first attribute.
   */
  attribute?: string;
}

/** Integer reaction orders the engine names; `null` means the data cannot tell them apart. */
export type IntegerOrder = 0 | 1 | 2;

/** How the measurement error scales: constant variance, or constant coefficient of variation. */
export type ErrorModel = 'constant' | 'proportional';

/** Direction in which the attribute moves, which decides the one- or two-sided Q1E limit. */
export type AttributeDirection = 'decreasing' | 'increasing' | 'either';

/** The four rate laws fitted to every series: the integer orders 0, 1, 2 and a free order n. */
export type RateLawModel = 0 | 1 | 2 | 'n';
