import { and, eq } from 'drizzle-orm';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { reportReviews, reports, reportVersions } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { ReviewFacts } from './review-policy.ts';

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
 * is written by the first attempt to submit (`openReviewRecord`), never by looking at the version.
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
  reportId: number,
  versionNumber: number,
  options: { lock?: boolean } = {},
): Promise<ReviewVersion> {
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
 * if it has none. Idempotent; `submitForReview` commits it on its own, before the submission.
 */
export async function openReviewRecord(db: Executor, subject: ReviewVersion): Promise<void> {
  await db
    .insert(reportReviews)
    .values({ reportVersionId: subject.version.id, organisationId: subject.report.organisationId })
    .onConflictDoNothing();
}

/**
 * The facts the review policy judges. A session user is an active account: `loadSessionUser`
 * ends the session of a deactivated one at its next request.
 */
export function reviewFacts(
  subject: ReviewVersion,
  actor: SessionUser,
  assignments: ReviewFacts['assignments'],
): ReviewFacts {
  return {
    actor: { id: actor.id, organisationId: actor.organisationId, roles: actor.roles, active: true },
    report: subject.report,
    version: subject.version,
    review: subject.review,
    assignments,
  };
}
