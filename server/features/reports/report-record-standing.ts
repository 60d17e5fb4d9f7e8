/**
 * What a report's detail says about the records behind it.
 *
 * The study: a report is rendered from an analysis run, which keeps the study version it was
 * computed against (server/features/analysis/study-snapshot.ts). When the study has changed since,
 * the detail says so in plain sentences, so the reader can run the analysis again and render a new
 * version. The report itself: whether it was retired, when, by whom and why.
 */
import type { Executor } from '../../platform/db/client.ts';
import { runStudyStanding, standingSentences } from '../analysis/index.ts';
import { type Retirement, retirementOf } from '../retirement/index.ts';

export interface ReportRecordStanding {
  /** The study version the report's latest analysis was computed against. */
  studyVersion: number | null;
  /** One sentence per study version recorded since; empty while the study is unchanged. */
  studyChangedSince: string[];
  retirement: (Omit<Retirement, 'retiredAt'> & { retiredAt: string }) | null;
}

export async function withRecordStanding<
  T extends { id: number; analysisRunId: number; versions: { analysisRunId: number }[] },
>(db: Executor, organisationId: number, detail: T): Promise<T & ReportRecordStanding> {
  const runId = detail.versions.at(-1)?.analysisRunId ?? detail.analysisRunId;
  const standing = await runStudyStanding(db, organisationId, runId);
  const retirement = await retirementOf(db, organisationId, 'report', detail.id);
  return {
    ...detail,
    studyVersion: standing?.versionNumber ?? null,
    studyChangedSince: standing ? standingSentences(standing) : [],
    retirement: retirement ? { ...retirement, retiredAt: retirement.retiredAt.toISOString() } : null,
  };
}
