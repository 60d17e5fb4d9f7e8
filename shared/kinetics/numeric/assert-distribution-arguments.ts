import { KineticsError } from './kinetics-error.ts';

/**
 * Checks a probability lies strictly between 0 and 1, where every quantile is finite.
 *
 * Throws `KineticsError('invalid-input')` otherwise (0 and 1 map to ±Infinity, which no caller can use).
 *
 * Example: `assertOpenProbability(0.975, 'p')` returns nothing; `assertOpenProbability(1, 'p')` throws.
 */
export function assertOpenProbability(probability: number, name: string): void {
  if (!(Number.isFinite(probability) && probability > 0 && probability < 1)) {
    throw new KineticsError(
      'invalid-input',
      `${name} must lie strictly between 0 and 1; got ${probability}.`,
      {
        name,
        value: probability,
      },
    );
  }
}

/**
 * Checks a degrees-of-freedom argument is a finite positive number (non-integer values are
 * allowed, as the distributions are defined for them, e.g. Welch–Satterthwaite degrees of freedom).
 *
 * Throws `KineticsError('invalid-input')` for zero, negative, NaN or infinite values.
 *
 * Example: `assertDegreesOfFreedom(12, 'df')` returns nothing; `assertDegreesOfFreedom(0, 'df')` throws.
 */
export function assertDegreesOfFreedom(degreesOfFreedom: number, name: string): void {
  if (!(Number.isFinite(degreesOfFreedom) && degreesOfFreedom > 0)) {
    throw new KineticsError(
      'invalid-input',
      `${name} must be a finite positive number; got ${degreesOfFreedom}.`,
      {
        name,
        value: degreesOfFreedom,
      },
    );
  }
}

/**
 * Checks a test statistic is a number that is not NaN and not below `minimum`
 * (±Infinity are allowed where the distribution function has a limit there).
 *
 * Throws `KineticsError('invalid-input')` otherwise.
 *
 * Example: `assertStatistic(3.2, 'f', 0)` returns nothing; `assertStatistic(-1, 'f', 0)` throws.
 */
export function assertStatistic(value: number, name: string, minimum = Number.NEGATIVE_INFINITY): void {
  if (typeof value !== 'number' || Number.isNaN(value) || value < minimum) {
    throw new KineticsError('invalid-input', `${name} must be a number not below ${minimum}; got ${value}.`, {
      name,
      value,
    });
  }
}
