import { eq, sql } from 'drizzle-orm';
import { type ReturnForReworkRequest, returnForReworkSchema } from '../../../shared/api/review.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Executor, Transaction } from '../../platform/db/client.ts';
import { reportReviews } from '../../platform/db/schema/index.ts';
import { commitThenMail } from '../../platform/mail/mail-transport.ts';
import type { ReviewActionContext, ReviewTarget } from './review-action.ts';
import { reportReturnedMessage } from './review-mail.ts';
import { currentAssignments, personName } from './review-people.ts';
import { decideReturn } from './review-policy.ts';
import { enforceDecision, throwIfRefused } from './review-refusals.ts';
import { loadReviewVersion, type ReviewVersion, reviewFacts } from './review-version.ts';

/** The policy's answer for `actor` and this version, with the current round's assignments. */
async function returnDecision(db: Executor, context: ReviewActionContext, subject: ReviewVersion) {
  const assigned = await currentAssignments(db, subject.version.id, subject.review.round);
  const assignments = assigned.map((person) => ({ reviewerId: person.id, round: subject.review.round }));
  return decideReturn(reviewFacts(subject, context.actor, assignments));
}

/** Sets the version `returned` with the comment, and appends the audit event. */
async function markReturned(
  tx: Transaction,
  context: ReviewActionContext,
  subject: ReviewVersion,
  comment: string,
) {
  const { actor } = context;
  const { report, version, review } = subject;
  await tx
    .update(reportReviews)
    .set({ state: 'returned', lastComment: comment, updatedAt: sql`now()` })
    .where(eq(reportReviews.reportVersionId, version.id));
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'review.returned',
    recordType: 'report_version',
    recordId: version.id,
    before: { state: review.state, round: review.round },
    after: {
      reportNumber: report.reportNumber,
      versionNumber: version.versionNumber,
      state: 'returned',
      round: review.round,
      comment,
    },
    context: context.audit,
  });
}

/**
 * An assigned reviewer returns the version to its author with a comment, and the author is told.
 * Throws 403 (not assigned in this round; recorded), 409 (not in review), 400 (no comment).
 */
export async function returnForRework(options: {
  target: ReviewTarget;
  request: ReturnForReworkRequest;
  context: ReviewActionContext;
}): Promise<{ state: 'returned' }> {
  const { target, context } = options;
  const input = returnForReworkSchema.parse(options.request);
  const { organisationId } = context.actor;
  // A reviewer's refusal is recorded first, outside the transaction, so that it outlives the request.
  const before = await loadReviewVersion(context.db, organisationId, target.reportId, target.versionNumber);
  const early = await returnDecision(context.db, context, before);
  if (!early.allowed && early.auditAction)
    await enforceDecision(context, before, early, { attempted: 'return' });
  const { result } = await commitThenMail(context.db, async (tx) => {
    const subject = await loadReviewVersion(tx, organisationId, target.reportId, target.versionNumber, {
      lock: true,
    });
    throwIfRefused(await returnDecision(tx, context, subject));
    await markReturned(tx, context, subject, input.comment);
    const author = await personName(tx, subject.report.authorId);
    const mail = [
      reportReturnedMessage(subject, { author, reviewer: context.actor, comment: input.comment }),
    ];
    return { result: { state: 'returned' as const }, mail };
  });
  return result;
}
