/**
 * The study page's datasets and analysis runs with their retirements: retired ones are left out
 * unless "include retired" is chosen, and marked when shown. "Retire…" is offered to the analyst
 * who made the record and to admins (the retirement service checks again).
 */
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { retirementsOf } from '../retirement/index.ts';
import type { studyOverview } from './studies.ts';

type Overview = Awaited<ReturnType<typeof studyOverview>>;

export async function retiredRows(
  db: Executor,
  actor: SessionUser,
  overview: Overview,
  includeRetired: boolean,
) {
  const [retiredDatasets, retiredRuns] = await Promise.all([
    retirementsOf(db, actor.organisationId, 'dataset'),
    retirementsOf(db, actor.organisationId, 'analysis_run'),
  ]);
  const mayRetire = (ownerId: number) =>
    actor.roles.includes('admin') || (actor.roles.includes('analyst') && actor.id === ownerId);
  const datasets = overview.datasets
    .map((dataset) => ({
      ...dataset,
      shortHash: dataset.sha256.slice(0, 12),
      retirement: retiredDatasets.get(dataset.id) ?? null,
      canRetire: mayRetire(dataset.createdById),
    }))
    .filter((dataset) => includeRetired || dataset.retirement === null);
  const runs = overview.runs
    .map((run) => ({ ...run, retirement: retiredRuns.get(run.id) ?? null }))
    .filter((run) => includeRetired || run.retirement === null);
  const hidden =
    overview.datasets.filter((dataset) => retiredDatasets.has(dataset.id)).length +
    overview.runs.filter((run) => retiredRuns.has(run.id)).length;
  return {
    datasets,
    runs,
    retiredFilter: { action: `/studies/${overview.study.id}`, included: includeRetired, count: hidden },
  };
}
