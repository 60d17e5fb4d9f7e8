import { KineticsError } from '../numeric/kinetics-error.ts';
import type { StabilityTransform } from './stability-batch.ts';

/**
 * Puts a value (a result or an acceptance limit) on the regression scale: itself, ln x or 1/x.
 *
 * Throws `KineticsError('non-positive-value')` when ln x or 1/x is asked of a value ≤ 0 — a first-
 * or second-order model is not applicable to such data — and 'invalid-input' for a non-finite value.
 *
 * Example: `toStabilityScale(90, 'ln')` is 4.4998; `toStabilityScale(90, '1/x')` is 0.011111.
 */
export function toStabilityScale(value: number, transform: StabilityTransform, what = 'value'): number {
  if (!Number.isFinite(value)) {
    throw new KineticsError('invalid-input', `The ${what} ${value} is not a finite number.`, { value });
  }
  if (transform === 'none') {
    return value;
  }
  if (value <= 0) {
    throw new KineticsError(
      'non-positive-value',
      `The ${what} ${value} is not positive, so the '${transform}' scale (order ${transform === 'ln' ? 1 : 2}) is not applicable.`,
      { value, transform },
    );
  }
  return transform === 'ln' ? Math.log(value) : 1 / value;
}

/**
 * Back from the regression scale to the value's own scale; null where no value exists
 * (a reciprocal ≤ 0, or exp overflowing a double).
 *
 * Example: `fromStabilityScale(Math.log(90), 'ln')` is 90; `fromStabilityScale(-0.1, '1/x')` is null.
 */
export function fromStabilityScale(scaled: number, transform: StabilityTransform): number | null {
  if (transform === 'none') {
    return scaled;
  }
  if (transform === 'ln') {
    const value = Math.exp(scaled);
    return Number.isFinite(value) ? value : null;
  }
  return scaled > 0 ? 1 / scaled : null;
}

/** Whether the transform reverses the order of values (only the reciprocal does). */
export function transformReversesOrder(transform: StabilityTransform): boolean {
  return transform === '1/x';
}
