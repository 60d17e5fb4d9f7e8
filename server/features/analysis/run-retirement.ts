/** The analysis page's retirement note and "Retire…" offer (server/features/retirement). */
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { mayRetire, retirementOf } from '../retirement/index.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';

export async function runRetirement(db: Executor, actor: SessionUser, run: AnalysisRunRecord) {
  const retirement = await retirementOf(db, actor.organisationId, 'analysis_run', run.id);
  const record = { type: 'analysis_run' as const, id: run.id, label: '', ownerId: run.runBy.id, url: '' };
  return { retirement, canRetire: retirement === null && mayRetire(actor, record) };
}
