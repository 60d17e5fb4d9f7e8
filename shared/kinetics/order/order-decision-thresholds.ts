/**
 * The thresholds of the reaction-order decision (`select-order.ts`), in one place so that a method
 * statement can quote them and a change to one is reviewed on its own.
 */

/**
 * Fraction of the initial value that must have reacted before an order is named: below ~30 % the orders are
 * indistinguishable within assay error (the project's own simulation, docs/methods.md#order-decision; the
 * textbook warning in Connors, Amidon & Stella, Chemical Stability of Pharmaceuticals, from memory).
 */
export const MIN_FRACTION_REACTED = 0.3;
/** AICc lead over every other integer order needed to name one (Burnham & Anderson 2002: Δ > 10 means essentially no support; from memory). */
export const DECISIVE_DELTA_AICC = 10;
/** The free-order F test must not reject the named integer order at this level (strict, so it alone abstains on ≤ 0.1 % of clean series). */
export const ORDER_CONSISTENCY_ALPHA = 0.001;
/** The runs test on the named law's residuals must not show systematic misfit at this level. */
export const SYSTEMATIC_MISFIT_ALPHA = 0.001;
/** AICc needs N − K − 1 > 0 with K = 3 for a two-parameter law plus its error SD, so at least 5 points. */
export const MIN_POINTS_FOR_COMPARISON = 5;
