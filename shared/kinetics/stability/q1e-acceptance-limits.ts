import { KineticsError } from '../numeric/kinetics-error.ts';
import type { AttributeDirection } from '../types.ts';
import type { LimitSide } from './confidence-limit-crossing.ts';
import type { StabilityTransform } from './stability-batch.ts';
import { toStabilityScale, transformReversesOrder } from './stability-scale.ts';

/** An acceptance limit as the evaluation uses it, on both scales. */
export interface ScaledAcceptanceLimit {
  /** Which acceptance criterion of the attribute this is. */
  acceptanceLimit: LimitSide;
  /** The limit in the attribute's own unit. */
  value: number;
  /** The limit on the regression scale. */
  scaledValue: number;
  /** Which confidence limit of the regression-scale line is compared with it. */
  sideOnScale: LimitSide;
}

/**
 * Which acceptance limits a Q1E evaluation compares, on which side, and with which sidedness.
 *
 * Rules (ICH Q1E App. B.1; docs/methods.md#q1e-scale-and-acceptance-limits): a decreasing
 * attribute is judged by the lower one-sided limit against the lower criterion; an increasing one
 * by the upper one-sided limit against the upper criterion; an attribute that may move either way
 * by two-sided limits (each side at (1 + confidence)/2) against every criterion given. A
 * criterion that does not apply to the direction is ignored and a note says so. On the '1/x'
 * scale order reverses, so a lower criterion is compared with the upper confidence limit of the
 * reciprocal line, and vice versa.
 *
 * Throws `KineticsError('invalid-input')` when the criterion the direction needs is missing (or,
 * for 'either', none is given), and `KineticsError('non-positive-value')` for a criterion ≤ 0 on
 * the 'ln' or '1/x' scale.
 *
 * Example: direction 'decreasing', lowerLimit 90, scale '1/x' → one limit, scaledValue 1/90,
 * sideOnScale 'upper', quantileLevel = confidence (one-sided).
 */
export function q1eAcceptanceLimits(
  direction: AttributeDirection,
  transform: StabilityTransform,
  confidence: number,
  lowerLimit: number | undefined,
  upperLimit: number | undefined,
): {
  limits: ScaledAcceptanceLimit[];
  quantileLevel: number;
  sidedness: 'one-sided' | 'two-sided';
  notes: string[];
} {
  const notes: string[] = [];
  const wanted: { side: LimitSide; value: number }[] = [];
  if (direction === 'decreasing' || direction === 'either') {
    if (lowerLimit !== undefined) {
      wanted.push({ side: 'lower', value: lowerLimit });
    } else if (direction === 'decreasing') {
      throw new KineticsError('invalid-input', 'A decreasing attribute needs a lower acceptance limit.');
    }
  }
  if (direction === 'increasing' || direction === 'either') {
    if (upperLimit !== undefined) {
      wanted.push({ side: 'upper', value: upperLimit });
    } else if (direction === 'increasing') {
      throw new KineticsError('invalid-input', 'An increasing attribute needs an upper acceptance limit.');
    }
  }
  if (wanted.length === 0) {
    throw new KineticsError(
      'invalid-input',
      'An attribute that may move either way needs at least one acceptance limit.',
    );
  }
  if (direction === 'decreasing' && upperLimit !== undefined) {
    notes.push(
      'The upper acceptance limit is not evaluated: the attribute decreases (one-sided lower limit, ICH Q1E).',
    );
  }
  if (direction === 'increasing' && lowerLimit !== undefined) {
    notes.push(
      'The lower acceptance limit is not evaluated: the attribute increases (one-sided upper limit, ICH Q1E).',
    );
  }
  const reverses = transformReversesOrder(transform);
  if (reverses) {
    notes.push(
      'On the 1/x scale the order of values is reversed: a lower acceptance limit is met by the upper confidence limit of the reciprocal line.',
    );
  }
  if (transform === 'ln') {
    notes.push('On the ln scale the back-transformed mean line is the geometric-mean (median) curve.');
  }
  const limits = wanted.map(({ side, value }) => ({
    acceptanceLimit: side,
    value,
    scaledValue: toStabilityScale(value, transform, `${side} acceptance limit`),
    sideOnScale: (reverses ? (side === 'lower' ? 'upper' : 'lower') : side) as LimitSide,
  }));
  if (
    direction === 'either' &&
    lowerLimit !== undefined &&
    upperLimit !== undefined &&
    !(lowerLimit < upperLimit)
  ) {
    throw new KineticsError('invalid-input', 'The lower acceptance limit must lie below the upper one.', {
      lowerLimit,
      upperLimit,
    });
  }
  const twoSided = direction === 'either';
  return {
    limits,
    quantileLevel: twoSided ? (1 + confidence) / 2 : confidence,
    sidedness: twoSided ? 'two-sided' : 'one-sided',
    notes,
  };
}
