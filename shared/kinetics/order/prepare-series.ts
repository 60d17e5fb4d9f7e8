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
  const usedTimes: number[] = [];
  const usedValues: number[] = [];
  const usedIndices: number[] = [];
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
    if (usedTimes.length > 0 && observation.time < usedTimes[usedTimes.length - 1]!) sorted = false;
    usedTimes.push(observation.time);
    usedValues.push(observation.value);
    usedIndices.push(index);
  }
  // Parallel lists, not one object per point: series can hold 10⁵ points. Sort only when needed (stable,
  // so replicates keep their input order).
  let times = usedTimes;
  let values = usedValues;
  let indices = usedIndices;
  if (!sorted) {
    const order = usedTimes.map((_, position) => position);
    order.sort((a, b) => usedTimes[a]! - usedTimes[b]! || a - b);
    times = order.map((position) => usedTimes[position]!);
    values = order.map((position) => usedValues[position]!);
    indices = order.map((position) => usedIndices[position]!);
  }
  const count = times.length;
  if (count < MIN_POINTS) {
    throw new KineticsError(
      'too-few-points',
      `Series ${series.id} has ${count} usable point${count === 1 ? '' : 's'}; a rate law needs at least ${MIN_POINTS}.`,
      { id: series.id, n: count, excluded: excluded.length, minimum: MIN_POINTS },
    );
  }
  if (times[0] === times[count - 1]) {
    throw new KineticsError(
      'single-time',
      `Every usable point of series ${series.id} is at time ${times[0]}; measure at more than one time.`,
      { id: series.id, time: times[0], n: count },
    );
  }
  return {
    times,
    values,
    labelOf: (index: number) => labelOfObservation(indices[index]!),
    excluded,
  };
}
