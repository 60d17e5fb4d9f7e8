import { and, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { reportReviews, reports, reportVersions } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { ReviewTarget } from './review-action.ts';

/** Where a version stands in review: the parts of its `report_reviews` row the workflow reads. */
export type ReviewStanding = Pick<
  typeof reportReviews.$inferSelect,
  'state' | 'round' | 'lastComment' | 'submittedBy' | 'submittedAt'
>;

export interface ReviewVersion {
  report: typeof reports.$inferSelect;
  version: typeof reportVersions.$inferSelect;
  review: ReviewStanding;
}

/**
 * A version that has no review row yet is in draft, round 0: the row's column defaults. The row
 * is written when the version is first submitted (`openReviewRecord`, in the submission's
 * transaction), never by looking at the version.
 */
const NOT_YET_SUBMITTED: ReviewStanding = {
  state: 'draft',
  round: 0,
  lastComment: null,
  submittedBy: null,
  submittedAt: null,
};

async function reviewStanding(db: Executor, versionId: number, lock: boolean): Promise<ReviewStanding> {
  const query = db.select().from(reportReviews).where(eq(reportReviews.reportVersionId, versionId));
  const [row] = lock ? await query.for('update') : await query;
  return row ?? NOT_YET_SUBMITTED;
}

/**
 * One version of a report of the organisation with where it stands in review. Reads only.
 * `lock` takes the review row FOR UPDATE (inside a transaction; a version never submitted has no
 * row to lock, and no action but submitting applies to it). Throws 404 outside the organisation.
 */
export async function loadReviewVersion(
  db: Executor,
  organisationId: number,
  target: ReviewTarget,
  options: { lock?: boolean } = {},
): Promise<ReviewVersion> {
  const { reportId, versionNumber } = target;
  const [row] = await db
    .select({ report: reports, version: reportVersions })
    .from(reportVersions)
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        eq(reports.id, reportId),
        eq(reports.organisationId, organisationId),
        eq(reportVersions.versionNumber, versionNumber),
      ),
    );
  if (!row)
    throw new HttpError(404, `Report ${reportId} has no version ${versionNumber} in your organisation.`);
  return { ...row, review: await reviewStanding(db, row.version.id, options.lock === true) };
}

/**
 * The first step of submitting: creates the version's review row in draft (the column defaults)
 * if it has none, so that the submission can take it FOR UPDATE. Idempotent; runs in the
 * submission's transaction, so a refused submission leaves nothing behind.
 */
export async function openReviewRecord(db: Executor, subject: ReviewVersion): Promise<void> {
  await db
    .insert(reportReviews)
    .values({ reportVersionId: subject.version.id, organisationId: subject.report.organisationId })
    .onConflictDoNothing();
}
