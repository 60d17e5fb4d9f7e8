import { KineticsError } from '../numeric/kinetics-error.ts';
import type { Series } from '../types.ts';

/**
 * Turns a series into the points the fits use: excluded observations set aside with their reasons,
 * the rest sorted by time (replicates — repeated times — kept as separate points, in their input order).
 *
 * Why: every fit, plot and test downstream assumes time-ordered points (the runs test reads the residual
 * signs in time order), and the method statement must list what was left out and why.
 *
 * Throws `KineticsError('invalid-input')` for a non-finite time or value (naming the point) or an
 * exclusion without a reason, `KineticsError('too-few-points')` when fewer than 3 points remain (no rate law
 * can be fitted with an estimate of its scatter), and `KineticsError('single-time')` when every remaining
 * point has the same time (no change with time can be measured).
 *
 * Example: observations at times 6, 0, 3, 9 with the one at 3 excluded (reason "vial broken") give times
 * [0, 6, 9] and one excluded point with its reason.
 */

export interface ExcludedPoint {
  time: number;
  value: number;
  reason: string;
  source?: { row?: number; cell?: string };
}

export interface PreparedSeries {
  times: number[];
  values: number[];
  /** How a used point is named in messages, e.g. "the point at time 3 (row 7)" (built on demand). */
  labelOf: (index: number) => string;
  excluded: ExcludedPoint[];
}

export const MIN_POINTS = 3;

export function prepareSeries(series: Series): PreparedSeries {
  if (!Array.isArray(series.observations)) {
    throw new KineticsError('invalid-input', `Series ${series.id} has no list of observations.`, {
      id: series.id,
    });
  }
  const used: { time: number; value: number; index: number }[] = [];
  const excluded: ExcludedPoint[] = [];
  const observations = series.observations;
  const labelOfObservation = (index: number): string => {
    const observation = observations[index]!;
    return `the point at time ${observation.time}${
      observation.source?.row === undefined ? '' : ` (row ${observation.source.row})`
    }`;
  };
  let sorted = true;
  for (let index = 0; index < observations.length; index++) {
    const observation = observations[index]!;
    if (!Number.isFinite(observation.time) || !Number.isFinite(observation.value)) {
      throw new KineticsError(
        'invalid-input',
        `Observation ${index + 1} of series ${series.id} has a time or value that is not a finite number.`,
        {
          id: series.id,
          index,
          time: observation.time,
          value: observation.value,
          source: observation.source,
        },
      );
    }
    if (observation.excluded !== undefined) {
      const reason = observation.excluded.reason?.trim() ?? '';
      if (reason === '') {
        throw new KineticsError('invalid-input', `Excluding ${labelOfObservation(index)} needs a reason.`, {
          id: series.id,
          index,
        });
      }
      excluded.push({
        time: observation.time,
        value: observation.value,
        reason,
        ...(observation.source === undefined ? {} : { source: observation.source }),
      });
      continue;
    }
    if (used.length > 0 && observation.time < used[used.length - 1]!.time) sorted = false;
    used.push({ time: observation.time, value: observation.value, index });
  }
  if (!sorted) used.sort((a, b) => a.time - b.time || a.index - b.index);
  if (used.length < MIN_POINTS) {
    throw new KineticsError(
      'too-few-points',
      `Series ${series.id} has ${used.length} usable point${used.length === 1 ? '' : 's'}; a rate law needs at least ${MIN_POINTS}.`,
      { id: series.id, n: used.length, excluded: excluded.length, minimum: MIN_POINTS },
    );
  }
  if (used.every((point) => point.time === used[0]!.time)) {
    throw new KineticsError(
      'single-time',
      `Every usable point of series ${series.id} is at time ${used[0]!.time}; measure at more than one time.`,
      { id: series.id, time: used[0]!.time, n: used.length },
    );
  }
  return {
    times: used.map((point) => point.time),
    values: used.map((point) => point.value),
    labelOf: (index: number) => labelOfObservation(used[index]!.index),
    excluded,
  };
}
