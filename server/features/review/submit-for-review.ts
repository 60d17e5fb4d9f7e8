import { eq, sql } from 'drizzle-orm';
import { type SubmitForReviewRequest, submitForReviewSchema } from '../../../shared/api/review.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Transaction } from '../../platform/db/client.ts';
import { reportReviews, reviewAssignments } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail } from '../../platform/mail/mail-transport.ts';
import type { ReviewActionContext, ReviewTarget } from './review-action.ts';
import { reviewRequestedMessage } from './review-mail.ts';
import { type Reviewer, reviewerCandidates } from './review-people.ts';
import { authorsOf, chosenReviewersProblem, decideSubmit } from './review-policy.ts';
import { throwIfRefused } from './review-refusals.ts';
import { loadReviewVersion, openReviewRecord, type ReviewVersion, reviewFacts } from './review-version.ts';

/** The reviewers chosen, checked against who may review this version; 400 naming the field otherwise. */
async function chooseReviewers(tx: Transaction, subject: ReviewVersion, reviewerIds: number[]) {
  const authors = authorsOf(subject);
  const eligible = await reviewerCandidates(tx, subject.report.organisationId, authors);
  const chosen = [...new Set(reviewerIds)];
  const problem = chosenReviewersProblem(chosen, new Set(eligible.map((person) => person.id)), authors);
  if (problem)
    throw new HttpError(400, 'Some fields are not valid.', [{ field: 'reviewerIds', message: problem }]);
  return eligible.filter((person) => chosen.includes(person.id));
}

/** Starts the next round: the review row in review, the round's assignments, and the audit event. */
async function startRound(
  tx: Transaction,
  context: ReviewActionContext,
  subject: ReviewVersion,
  reviewers: Reviewer[],
  note: string,
): Promise<number> {
  const { actor } = context;
  const { report, version, review } = subject;
  const round = review.round + 1;
  await tx
    .update(reportReviews)
    .set({ state: 'in_review', round, submittedBy: actor.id, submittedAt: sql`now()`, updatedAt: sql`now()` })
    .where(eq(reportReviews.reportVersionId, version.id));
  await tx
    .insert(reviewAssignments)
    .values(reviewers.map((person) => ({ reportVersionId: version.id, round, reviewerId: person.id })));
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'review.submitted',
    recordType: 'report_version',
    recordId: version.id,
    before: { state: review.state, round: review.round },
    after: {
      reportNumber: report.reportNumber,
      versionNumber: version.versionNumber,
      state: 'in_review',
      round,
      reviewers: reviewers.map((person) => ({ id: person.id, name: person.fullName })),
      pdfSha256: version.pdfSha256,
      note: note || null,
    },
    context: context.audit,
  });
  return round;
}

/**
 * The author submits a ready version (draft or returned) to the chosen reviewers: a new round,
 * and a message to each. Throws 403 (not the report's author), 409 (not ready, or not in
 * draft/returned), 400 (a chosen person is not an eligible reviewer).
 */
export async function submitForReview(options: {
  target: ReviewTarget;
  request: SubmitForReviewRequest;
  context: ReviewActionContext;
}): Promise<{ round: number; reviewers: Reviewer[] }> {
  const { target, context } = options;
  const input = submitForReviewSchema.parse(options.request);
  const { db, actor } = context;
  // Submitting needs the version's review record. Opening it is committed on its own, so it stays
  // even when this attempt is refused: a draft record says only "not submitted yet".
  const found = await loadReviewVersion(db, actor.organisationId, target.reportId, target.versionNumber);
  await openReviewRecord(db, found);
  const { result } = await commitThenMail(db, async (tx) => {
    const subject = await loadReviewVersion(tx, actor.organisationId, target.reportId, target.versionNumber, {
      lock: true,
    });
    throwIfRefused(decideSubmit(reviewFacts(subject, actor, [])));
    const reviewers = await chooseReviewers(tx, subject, input.reviewerIds);
    const round = await startRound(tx, context, subject, reviewers, input.note);
    const mail = reviewers.map((reviewer) =>
      reviewRequestedMessage(subject, { author: context.actor, reviewer, note: input.note }),
    );
    return { result: { round, reviewers }, mail };
  });
  return result;
}
