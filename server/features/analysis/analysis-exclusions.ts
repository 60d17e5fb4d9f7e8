import type { Exclusion } from '../../../shared/api/analyses.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { HttpError } from '../../platform/http/http-error.ts';

/** An exclusion as stored with a run: the point it names, resolved to its index, time and value. */
export interface ResolvedExclusion {
  seriesId: string;
  observationIndex: number;
  time: number;
  value: number;
  reason: string;
  cell: string | null;
}

/**
 * Marks the excluded points of a dataset's series (a copy; the stored dataset is never changed).
 * The series of every attribute are here: their ids are unique across the dataset ("Impurity B ·
 * B1 @ 25 °C" beside "Assay · B1 @ 25 °C"), so an exclusion names its point in any attribute.
 *
 * Each exclusion names its series and its point — by 0-based observation index, or by time (and
 * value, when replicates share a time). A point that cannot be found, that two entries name, or
 * that matches more than one observation is refused with a 400 naming the entry, so a run never
 * silently excludes the wrong point. Every problem is reported together.
 *
 * Example: one series with points at 0, 3, 6 and `{ seriesId, time: 3, reason }` gives the point at
 * 3 marked excluded with that reason, and the resolved exclusion `{ observationIndex: 1, ... }`.
 */
export function applyExclusions(
  seriesList: readonly Series[],
  exclusions: readonly Exclusion[],
): { series: Series[]; resolved: ResolvedExclusion[] } {
  const copies: Series[] = seriesList.map((series) => ({
    ...series,
    observations: series.observations.map((observation) => ({ ...observation })),
  }));
  const problems: { field: string; message: string }[] = [];
  const resolved: ResolvedExclusion[] = [];
  const taken = new Set<string>();
  exclusions.forEach((exclusion, entry) => {
    const field = `exclusions.${entry}`;
    const series = copies.find((candidate) => candidate.id === exclusion.seriesId);
    if (!series) {
      problems.push({
        field: `${field}.seriesId`,
        message: `There is no series "${exclusion.seriesId}" in this dataset.`,
      });
      return;
    }
    const index = locate(series, exclusion);
    if (typeof index === 'string') {
      problems.push({ field: `${field}.observationIndex`, message: index });
      return;
    }
    const key = `${series.id}\u0000${index}`;
    if (taken.has(key)) {
      problems.push({
        field: `${field}.observationIndex`,
        message: `Point ${index + 1} of ${series.id} is already excluded by an earlier entry.`,
      });
      return;
    }
    taken.add(key);
    const observation = series.observations[index]!;
    observation.excluded = { reason: exclusion.reason };
    resolved.push({
      seriesId: series.id,
      observationIndex: index,
      time: observation.time,
      value: observation.value,
      reason: exclusion.reason,
      cell: observation.source?.cell ?? null,
    });
  });
  if (problems.length > 0) throw new HttpError(400, 'Some excluded points could not be applied.', problems);
  return { series: copies, resolved };
}

/** The index of the named observation, or a message saying why it cannot be found. */
function locate(series: Series, exclusion: Exclusion): number | string {
  const count = series.observations.length;
  if (exclusion.observationIndex !== undefined) {
    const observation = series.observations[exclusion.observationIndex];
    if (!observation) {
      return `Series ${series.id} has ${count} points; there is no point ${exclusion.observationIndex + 1}.`;
    }
    if (exclusion.time !== undefined && observation.time !== exclusion.time) {
      return `Point ${exclusion.observationIndex + 1} of ${series.id} is at time ${observation.time}, not ${exclusion.time}.`;
    }
    if (exclusion.value !== undefined && observation.value !== exclusion.value) {
      return `Point ${exclusion.observationIndex + 1} of ${series.id} has value ${observation.value}, not ${exclusion.value}.`;
    }
    return exclusion.observationIndex;
  }
  const matches = series.observations.flatMap((observation, index) =>
    observation.time === exclusion.time &&
    (exclusion.value === undefined || observation.value === exclusion.value)
      ? [index]
      : [],
  );
  if (matches.length === 0) {
    return `Series ${series.id} has no point at time ${exclusion.time}${exclusion.value === undefined ? '' : ` with value ${exclusion.value}`}.`;
  }
  if (matches.length > 1) {
    return `Series ${series.id} has ${matches.length} points at time ${exclusion.time} (replicates); give the value or the observation number.`;
  }
  return matches[0]!;
}
