import { KineticsError } from '../numeric/kinetics-error.ts';
import type { StabilityBatch, StabilityTransform, TransformedBatch } from './stability-batch.ts';
import { toStabilityScale } from './stability-scale.ts';

/** A batch needs this many results for its own line to have a residual degree of freedom. */
export const MINIMUM_POINTS_PER_BATCH = 3;

/**
 * Validates the batches of a stability study and puts their values on the regression scale.
 *
 * Decisions: every batch needs at least 3 results at at least 2 different times (a line with
 * one residual degree of freedom; ICH Q1A(R2) asks for at least 3 time points even at the
 * accelerated condition); times must be finite and ≥ 0; batch identifiers must be unique.
 *
 * Throws `KineticsError`: 'too-few-points' (no batch, or a batch with fewer than 3 results),
 * 'single-time' (a batch whose results are all at one time), 'non-positive-value' (a value ≤ 0 on
 * the 'ln' or '1/x' scale), 'invalid-input' (duplicate or empty batch identifier, negative or
 * non-finite time or value).
 *
 * Example: one batch with (0, 100), (3, 99), (6, 98) on the 'ln' scale gives times [0, 3, 6] and
 * responses [4.6052, 4.5951, 4.5850].
 */
export function transformedStabilityBatches(
  batches: readonly StabilityBatch[],
  transform: StabilityTransform,
): TransformedBatch[] {
  if (batches.length === 0) {
    throw new KineticsError('too-few-points', 'A stability evaluation needs at least one batch.', {
      batches: 0,
    });
  }
  const seen = new Set<string>();
  return batches.map((batch) => {
    if (batch.batch.trim() === '' || seen.has(batch.batch)) {
      throw new KineticsError(
        'invalid-input',
        `Batch identifiers must be non-empty and unique; got "${batch.batch}".`,
        {
          batch: batch.batch,
        },
      );
    }
    seen.add(batch.batch);
    const n = batch.observations.length;
    if (n < MINIMUM_POINTS_PER_BATCH) {
      throw new KineticsError(
        'too-few-points',
        `Batch ${batch.batch} has ${n} results; a regression line needs at least ${MINIMUM_POINTS_PER_BATCH}.`,
        { batch: batch.batch, n },
      );
    }
    const times = batch.observations.map((observation, index) => {
      if (!Number.isFinite(observation.time) || observation.time < 0) {
        throw new KineticsError(
          'invalid-input',
          `Batch ${batch.batch}, result ${index}: time must be finite and ≥ 0.`,
          {
            batch: batch.batch,
            index,
          },
        );
      }
      return observation.time;
    });
    if (times.every((time) => time === times[0])) {
      throw new KineticsError(
        'single-time',
        `Batch ${batch.batch} has all its results at one time; no slope exists.`,
        {
          batch: batch.batch,
          time: times[0],
        },
      );
    }
    const responses = batch.observations.map((observation) =>
      toStabilityScale(observation.value, transform, `value of batch ${batch.batch}`),
    );
    return { batch: batch.batch, times, responses };
  });
}
