import { KineticsError } from './kinetics-error.ts';

/**
 * Checks that every entry of a list is a finite number, so that no NaN or Infinity can enter a
 * computation and come out as a silently wrong result.
 *
 * Why: a single NaN poisons every sum it enters, and an Infinity turns differences into NaN.
 * Rejecting them at the boundary gives the analyst a message naming the offending entry
 * instead of a blank or nonsensical result later.
 *
 * Throws `KineticsError('invalid-input')` naming the list and the first bad index.
 *
 * Example: `assertFiniteNumbers([1, 2, 3], 'time')` returns nothing;
 * `assertFiniteNumbers([1, Number.NaN], 'time')` throws with `details.index === 1`.
 */
export function assertFiniteNumbers(values: readonly number[], name: string): void {
  for (let index = 0; index < values.length; index++) {
    const value = values[index];
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      throw new KineticsError(
        'invalid-input',
        `${name}[${index}] is ${String(value)}, not a finite number.`,
        {
          name,
          index,
          value: String(value),
        },
      );
    }
  }
}

/**
 * Checks that optional regression weights are finite and strictly positive, one per observation.
 *
 * Throws `KineticsError('invalid-input')` for a length mismatch or a weight that is not a
 * finite positive number (a zero weight would silently drop the point; exclude it instead).
 *
 * Example: `assertValidWeights([1, 0.5], 2)` returns nothing; `assertValidWeights([1, 0], 2)` throws.
 */
export function assertValidWeights(weights: readonly number[], expectedLength: number): void {
  if (weights.length !== expectedLength) {
    throw new KineticsError(
      'invalid-input',
      `There are ${weights.length} weights for ${expectedLength} observations.`,
      { weights: weights.length, observations: expectedLength },
    );
  }
  assertFiniteNumbers(weights, 'weights');
  for (let index = 0; index < weights.length; index++) {
    if (weights[index]! <= 0) {
      throw new KineticsError(
        'invalid-input',
        `weights[${index}] is ${weights[index]}; weights must be positive.`,
        {
          index,
          value: weights[index],
        },
      );
    }
  }
}
