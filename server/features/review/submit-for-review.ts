import { eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Transaction } from '../../platform/db/client.ts';
import { reportReviews, reviewAssignments } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail } from '../../platform/mail/mail-transport.ts';
import type { ReviewActionContext, ReviewTarget, SubmitForReviewInput } from './review-action.ts';
import { reviewFacts } from './review-facts.ts';
import { reviewRequestedMessage } from './review-mail.ts';
import { type Reviewer, reviewerCandidates } from './review-people.ts';
import { authorsOf, chosenReviewersProblem, decideSubmit } from './review-policy.ts';
import { throwIfRefused } from './review-refusals.ts';
import { loadReviewVersion, openReviewRecord, type ReviewVersion } from './review-version.ts';

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
  round: { reviewers: Reviewer[]; note: string },
): Promise<number> {
  const { actor } = context;
  const { report, version, review } = subject;
  const next = review.round + 1;
  await tx
    .update(reportReviews)
    .set({
      state: 'in_review',
      round: next,
      submittedBy: actor.id,
      submittedAt: sql`now()`,
      updatedAt: sql`now()`,
    })
    .where(eq(reportReviews.reportVersionId, version.id));
  await tx
    .insert(reviewAssignments)
    .values(
      round.reviewers.map((person) => ({ reportVersionId: version.id, round: next, reviewerId: person.id })),
    );
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
      round: next,
      reviewers: round.reviewers.map((person) => ({ id: person.id, name: person.fullName })),
      pdfSha256: version.pdfSha256,
      note: round.note || null,
    },
    context: context.audit,
  });
  return next;
}

/**
 * The author submits a ready version (draft or returned) to the chosen reviewers: a new round,
 * and a message to each. One transaction; a refused submission writes nothing. Throws 403 (not
 * the report's author, or no analyst role), 409 (not ready, or not in draft/returned), 400 (a
 * chosen person is not an eligible reviewer).
 */
export async function submitForReview(options: {
  target: ReviewTarget;
  request: SubmitForReviewInput;
  context: ReviewActionContext;
}): Promise<{ round: number; reviewers: Reviewer[] }> {
  const { target, request, context } = options;
  const { db, actor } = context;
  const { result } = await commitThenMail(db, async (tx) => {
    // A version never submitted has no review row: open it (in draft), then take it FOR UPDATE.
    await openReviewRecord(tx, await loadReviewVersion(tx, actor.organisationId, target));
    const subject = await loadReviewVersion(tx, actor.organisationId, target, { lock: true });
    throwIfRefused(decideSubmit(reviewFacts(subject, actor, [])));
    const reviewers = await chooseReviewers(tx, subject, request.reviewerIds);
    const round = await startRound(tx, context, subject, { reviewers, note: request.note });
    const mail = reviewers.map((reviewer) =>
      reviewRequestedMessage(subject, { author: actor, reviewer, note: request.note }),
    );
    return { result: { round, reviewers }, mail };
  });
  return result;
}
