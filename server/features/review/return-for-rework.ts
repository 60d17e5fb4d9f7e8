import { eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Transaction } from '../../platform/db/client.ts';
import { reportReviews } from '../../platform/db/schema/index.ts';
import { commitThenMail } from '../../platform/mail/mail-transport.ts';
import type { ReturnForReworkInput, ReviewActionContext, ReviewTarget } from './review-action.ts';
import { loadReviewFacts } from './review-facts.ts';
import { reportReturnedMessage } from './review-mail.ts';
import { personName } from './review-people.ts';
import { decideReturn } from './review-policy.ts';
import { enforceDecision, throwIfRefused } from './review-refusals.ts';
import { loadReviewVersion, type ReviewVersion } from './review-version.ts';

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
  request: ReturnForReworkInput;
  context: ReviewActionContext;
}): Promise<{ state: 'returned' }> {
  const { target, request, context } = options;
  const { db, actor } = context;
  // The policy is asked first outside the transaction, so that a refusal it records outlives the
  // request; then again on the locked row, in case the review moved meanwhile.
  const before = await loadReviewVersion(db, actor.organisationId, target);
  await enforceDecision(context, before, decideReturn(await loadReviewFacts(db, before, actor)), {
    attempted: 'return',
  });
  const { result } = await commitThenMail(db, async (tx) => {
    const subject = await loadReviewVersion(tx, actor.organisationId, target, { lock: true });
    throwIfRefused(decideReturn(await loadReviewFacts(tx, subject, actor)));
    await markReturned(tx, context, subject, request.comment);
    const author = await personName(tx, subject.report.authorId);
    const mail = [reportReturnedMessage(subject, { author, reviewer: actor, comment: request.comment })];
    return { result: { state: 'returned' as const }, mail };
  });
  return result;
}
