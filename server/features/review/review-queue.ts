import { and, asc, desc, eq, ne } from 'drizzle-orm';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import {
  reportReviews,
  reports,
  reportVersions,
  reviewAssignments,
  users,
} from '../../platform/db/schema/index.ts';

/** Versions in review in which `actor` is assigned to the current round, oldest submission first. */
export async function reviewQueue(db: Executor, actor: SessionUser) {
  return db
    .select({
      reportId: reports.id,
      reportNumber: reports.reportNumber,
      title: reports.title,
      versionNumber: reportVersions.versionNumber,
      round: reportReviews.round,
      submittedAt: reportReviews.submittedAt,
      authorName: users.fullName,
    })
    .from(reportReviews)
    .innerJoin(reportVersions, eq(reportVersions.id, reportReviews.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .innerJoin(users, eq(users.id, reports.authorId))
    .innerJoin(
      reviewAssignments,
      and(
        eq(reviewAssignments.reportVersionId, reportReviews.reportVersionId),
        eq(reviewAssignments.round, reportReviews.round),
        eq(reviewAssignments.reviewerId, actor.id),
      ),
    )
    .where(and(eq(reportReviews.organisationId, actor.organisationId), eq(reportReviews.state, 'in_review')))
    .orderBy(asc(reportReviews.submittedAt));
}

/** Versions of the actor's own reports that came back returned, newest first (for the queue page). */
export async function returnedToMe(db: Executor, actor: SessionUser) {
  return db
    .select({
      reportId: reports.id,
      reportNumber: reports.reportNumber,
      title: reports.title,
      versionNumber: reportVersions.versionNumber,
      comment: reportReviews.lastComment,
      updatedAt: reportReviews.updatedAt,
    })
    .from(reportReviews)
    .innerJoin(reportVersions, eq(reportVersions.id, reportReviews.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        eq(reportReviews.organisationId, actor.organisationId),
        eq(reportReviews.state, 'returned'),
        eq(reports.authorId, actor.id),
        ne(reportVersions.renderStatus, 'failed'),
      ),
    )
    .orderBy(desc(reportReviews.updatedAt))
    .limit(50);
}
