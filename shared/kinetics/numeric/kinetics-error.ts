/**
 * The one error type of the kinetics engine.
 *
 * Every degenerate case the engine can meet (too few points, all times equal, a logarithm of a
 * non-positive value, a design that does not determine its coefficients, an iteration that did
 * not converge, malformed input) is reported by throwing a `KineticsError` whose `code` names the
 * case. Callers branch on `code`, never on the message; the message is written for the analyst
 * and `details` carries the numbers that explain it (counts, indices, offending values).
 *
 * Example: `new KineticsError('too-few-points', 'A straight line needs at least 3 points; got 2.', { n: 2 })`
 * has `code === 'too-few-points'` and `details.n === 2`.
 */

/** The cases the engine reports; each has its own test beside the function that throws it. */
export type KineticsErrorCode =
  | 'too-few-points'
  | 'single-time'
  | 'non-positive-value'
  | 'zero-variance'
  | 'rank-deficient'
  | 'not-converged'
  | 'invalid-input'
  | 'not-applicable';

/** An engine failure with a machine-readable `code` and an analyst-readable message. */
export class KineticsError extends Error {
  /** Which degenerate case was met. */
  readonly code: KineticsErrorCode;
  /** Numbers that explain the failure (counts, indices, values); never needed to branch on. */
  readonly details?: Record<string, unknown>;

  constructor(code: KineticsErrorCode, message: string, details?: Record<string, unknown>) {
    super(message);
    this.name = 'KineticsError';
    this.code = code;
    if (details !== undefined) {
      this.details = details;
    }
  }
}
