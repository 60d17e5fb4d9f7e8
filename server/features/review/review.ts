import { and, asc, desc, eq, ne, sql } from 'drizzle-orm';
import {
  type ReturnForReworkRequest,
  returnForReworkSchema,
  type SubmitForReviewRequest,
  submitForReviewSchema,
} from '../../../shared/api/review.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  memberships,
  organisationSettings,
  organisations,
  reportReviews,
  reports,
  reportVersions,
  reviewAssignments,
  signatures,
  signedOutputs,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail, type MailMessage } from '../../platform/mail/mail-transport.ts';
import { reportReturnedMail, reviewRequestedMail } from '../../platform/mail/messages.ts';
import { isoDateTime } from '../reports/index.ts';

/**
 * The review workflow of a rendered report version (21 CFR 11.10(f), operational checks on the
 * sequence of steps; 11.10(g), authority checks):
 *
 *   draft ──submit──▶ in_review ──sign──▶ signed (final, locked by a trigger)
 *                         │
 *                         └──return (comment)──▶ returned ──submit──▶ in_review (next round)
 *
 * A `ready` version is in draft until its author submits it, choosing reviewers among the
 * organisation's members who hold the reviewer role — never the author, nor whoever rendered the
 * version (segregation of duties). Only a reviewer assigned in the current round may return or
 * sign it. Each step is one transaction with its audit event; mail goes out after the commit.
 * Refusals that matter for accountability (someone trying to act on a record they may not) are
 * audit events of their own, committed even though the request fails.
 *
 * Signing is in `e-signature.ts`; the first valid signature completes the review.
 */

import type { AuditContext } from '../../platform/audit/audit-context.ts';

export type { AuditContext };
export const DEFAULT_SIGNATURE_MEANINGS = ['Reviewed', 'Approved'];

export const reviewPath = (reportId: number, versionNumber: number) =>
  `/review/reports/${reportId}/versions/${versionNumber}`;

export interface ReviewVersion {
  report: typeof reports.$inferSelect;
  version: typeof reportVersions.$inferSelect;
  review: typeof reportReviews.$inferSelect;
}

/** The organisation's signature meanings (the admin's list, else Reviewed and Approved). */
export async function signatureMeanings(db: Executor, organisationId: number): Promise<string[]> {
  const [row] = await db
    .select({ meanings: organisationSettings.signatureMeanings })
    .from(organisationSettings)
    .where(eq(organisationSettings.organisationId, organisationId));
  const meanings = (row?.meanings ?? []).filter((meaning) => typeof meaning === 'string' && meaning.trim());
  return meanings.length > 0 ? meanings : DEFAULT_SIGNATURE_MEANINGS;
}

/**
 * One version of a report of the organisation with its review row (created in draft the first
 * time a ready version is looked at). `lock` takes the review row FOR UPDATE (inside a transaction).
 * Throws 404 outside the organisation.
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
  await db
    .insert(reportReviews)
    .values({ reportVersionId: row.version.id, organisationId })
    .onConflictDoNothing();
  const query = db.select().from(reportReviews).where(eq(reportReviews.reportVersionId, row.version.id));
  const [review] = options.lock ? await query.for('update') : await query;
  return { ...row, review: review! };
}

/** Who authored this version: the report's author and whoever rendered the version. */
export function authorsOf(subject: Pick<ReviewVersion, 'report' | 'version'>): Set<number> {
  return new Set([subject.report.authorId, subject.version.requestedBy]);
}

/** Reviewers assigned to the version's current round, with their names. */
export async function currentAssignments(db: Executor, versionId: number, round: number) {
  if (round === 0) return [];
  return db
    .select({ id: users.id, fullName: users.fullName, email: users.email })
    .from(reviewAssignments)
    .innerJoin(users, eq(users.id, reviewAssignments.reviewerId))
    .where(and(eq(reviewAssignments.reportVersionId, versionId), eq(reviewAssignments.round, round)))
    .orderBy(asc(users.fullName));
}

/** Active members of the organisation with the reviewer role, other than `excluded`. */
export async function reviewerCandidates(db: Executor, organisationId: number, excluded: Set<number>) {
  const rows = await db
    .selectDistinct({ id: users.id, fullName: users.fullName, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, organisationId),
        eq(memberships.role, 'reviewer'),
        eq(users.active, true),
      ),
    )
    .orderBy(asc(users.fullName), asc(users.id));
  return rows.filter((row) => !excluded.has(row.id));
}

/** Records a refused attempt in its own transaction (it must outlive the failing request), then throws. */
export async function refuse(
  db: Database,
  actor: SessionUser,
  action: string,
  subject: ReviewVersion,
  detail: Record<string, unknown>,
  error: HttpError,
  context: AuditContext,
): Promise<never> {
  await appendAuditEvent(db, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action,
    recordType: 'report_version',
    recordId: subject.version.id,
    after: {
      reportNumber: subject.report.reportNumber,
      versionNumber: subject.version.versionNumber,
      reviewState: subject.review.state,
      ...detail,
      refusal: error.message,
    },
    context,
  });
  throw error;
}

const mailBase = (subject: ReviewVersion) => ({
  reportNumber: subject.report.reportNumber,
  reportTitle: subject.report.title,
  versionNumber: subject.version.versionNumber,
  reportPath: reviewPath(subject.report.id, subject.version.versionNumber),
});

async function personName(db: Executor, userId: number) {
  const [row] = await db
    .select({ fullName: users.fullName, email: users.email })
    .from(users)
    .where(eq(users.id, userId));
  return row ?? { fullName: `user ${userId}`, email: '' };
}

/**
 * The author submits a ready version (draft or returned) to the chosen reviewers: a new round.
 * Throws 403 (not the report's author), 409 (not ready, or not in draft/returned), 400 (a chosen
 * person is not an eligible reviewer).
 */
export async function submitForReview(
  db: Database,
  actor: SessionUser,
  reportId: number,
  versionNumber: number,
  request: SubmitForReviewRequest,
  context: AuditContext,
) {
  const input = submitForReviewSchema.parse(request);
  const { result } = await commitThenMail(db, async (tx) => {
    const subject = await loadReviewVersion(tx, actor.organisationId, reportId, versionNumber, {
      lock: true,
    });
    const { report, version, review } = subject;
    if (report.authorId !== actor.id)
      throw new HttpError(403, `Only the report's author may submit ${report.reportNumber} for review.`);
    if (version.renderStatus !== 'ready')
      throw new HttpError(
        409,
        `Version ${versionNumber} is ${version.renderStatus}; only a rendered version can be reviewed.`,
      );
    if (review.state !== 'draft' && review.state !== 'returned')
      throw new HttpError(
        409,
        `Version ${versionNumber} is ${review.state.replace('_', ' ')}; it cannot be submitted again.`,
      );
    const eligible = await reviewerCandidates(tx, actor.organisationId, authorsOf(subject));
    const chosen = [...new Set(input.reviewerIds)];
    const unknown = chosen.filter((id) => !eligible.some((person) => person.id === id));
    if (unknown.length > 0) {
      const self = unknown.some((id) => authorsOf(subject).has(id));
      throw new HttpError(400, 'Some fields are not valid.', [
        {
          field: 'reviewerIds',
          message: self
            ? 'You cannot review your own report: choose another reviewer.'
            : 'Choose reviewers from the list (members holding the reviewer role).',
        },
      ]);
    }
    const round = review.round + 1;
    await tx
      .update(reportReviews)
      .set({
        state: 'in_review',
        round,
        submittedBy: actor.id,
        submittedAt: sql`now()`,
        updatedAt: sql`now()`,
      })
      .where(eq(reportReviews.reportVersionId, version.id));
    await tx
      .insert(reviewAssignments)
      .values(chosen.map((reviewerId) => ({ reportVersionId: version.id, round, reviewerId })));
    const reviewers = eligible.filter((person) => chosen.includes(person.id));
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
        versionNumber,
        state: 'in_review',
        round,
        reviewers: reviewers.map((person) => ({ id: person.id, name: person.fullName })),
        pdfSha256: version.pdfSha256,
        note: input.note || null,
      },
      context,
    });
    const mail: MailMessage[] = reviewers.map((person) => ({
      organisationId: actor.organisationId,
      kind: 'review-requested',
      to: { name: person.fullName, address: person.email },
      ...reviewRequestedMail({
        ...mailBase(subject),
        authorName: actor.fullName,
        reviewerName: person.fullName,
        note: input.note,
      }),
      record: { type: 'report_version', id: version.id },
    }));
    return { result: { round, reviewers }, mail };
  });
  return result;
}

/**
 * An assigned reviewer returns the version to its author with a comment. Throws 403 (not assigned
 * in this round; recorded), 409 (not in review), 400 (no comment).
 */
export async function returnForRework(
  db: Database,
  actor: SessionUser,
  reportId: number,
  versionNumber: number,
  request: ReturnForReworkRequest,
  context: AuditContext,
) {
  const input = returnForReworkSchema.parse(request);
  const before = await loadReviewVersion(db, actor.organisationId, reportId, versionNumber);
  const assigned = await currentAssignments(db, before.version.id, before.review.round);
  if (
    before.review.state === 'in_review' &&
    (!actor.roles.includes('reviewer') || !assigned.some((person) => person.id === actor.id))
  ) {
    await refuse(
      db,
      actor,
      'review.refused-not-assigned',
      before,
      { attempted: 'return' },
      new HttpError(403, 'Only a reviewer assigned to this round may return the report.'),
      context,
    );
  }
  const { result } = await commitThenMail(db, async (tx) => {
    const subject = await loadReviewVersion(tx, actor.organisationId, reportId, versionNumber, {
      lock: true,
    });
    const { report, version, review } = subject;
    if (review.state !== 'in_review')
      throw new HttpError(
        409,
        `Version ${versionNumber} is ${review.state.replace('_', ' ')}, not in review; it cannot be returned.`,
      );
    const stillAssigned = await currentAssignments(tx, version.id, review.round);
    if (!stillAssigned.some((person) => person.id === actor.id))
      throw new HttpError(403, 'Only a reviewer assigned to this round may return the report.');
    await tx
      .update(reportReviews)
      .set({ state: 'returned', lastComment: input.comment, updatedAt: sql`now()` })
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
        versionNumber,
        state: 'returned',
        round: review.round,
        comment: input.comment,
      },
      context,
    });
    const author = await personName(tx, report.authorId);
    const mail: MailMessage[] = [
      {
        organisationId: actor.organisationId,
        kind: 'report-returned',
        to: { name: author.fullName, address: author.email },
        ...reportReturnedMail({
          ...mailBase(subject),
          authorName: author.fullName,
          reviewerName: actor.fullName,
          comment: input.comment,
        }),
        record: { type: 'report_version', id: version.id },
      },
    ];
    return { result: { state: 'returned' as const }, mail };
  });
  return result;
}

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

/** The signer's signing lock, judged by the database clock. */
export async function signingLock(db: Executor, userId: number) {
  const result = await db.execute<{ locked: boolean; until: string | null }>(
    sql`select locked_until > now() as locked,
          to_char(locked_until at time zone 'UTC', 'YYYY-MM-DD HH24:MI "UTC"') as until
        from signing_lockouts where user_id = ${userId}`,
  );
  const row = result.rows[0];
  return { locked: row?.locked === true, until: row?.until ?? null };
}

const STATE_WORDS = {
  draft: 'Draft',
  in_review: 'In review',
  returned: 'Returned',
  signed: 'Signed',
} as const;

/** Everything the review page shows and offers to `actor` for one version. */
export async function reviewPageModel(
  db: Executor,
  actor: SessionUser,
  reportId: number,
  versionNumber: number,
  session: { firstSigningDone?: boolean },
) {
  const subject = await loadReviewVersion(db, actor.organisationId, reportId, versionNumber);
  const { report, version, review } = subject;
  const [organisation] = await db
    .select()
    .from(organisations)
    .where(eq(organisations.id, actor.organisationId));
  const timeZone = organisation?.timeZone ?? 'UTC';
  const authors = authorsOf(subject);
  const ready = version.renderStatus === 'ready' && version.pdfSha256 !== null;
  const isAuthor = report.authorId === actor.id;
  const assigned = await currentAssignments(db, version.id, review.round);
  const rounds = await db
    .select({ round: reviewAssignments.round, name: users.fullName })
    .from(reviewAssignments)
    .innerJoin(users, eq(users.id, reviewAssignments.reviewerId))
    .where(eq(reviewAssignments.reportVersionId, version.id))
    .orderBy(asc(reviewAssignments.round), asc(users.fullName));
  const canSubmit =
    ready &&
    isAuthor &&
    actor.roles.includes('analyst') &&
    (review.state === 'draft' || review.state === 'returned');
  const isAssigned = assigned.some((person) => person.id === actor.id);
  const canAct =
    ready &&
    review.state === 'in_review' &&
    isAssigned &&
    !authors.has(actor.id) &&
    actor.roles.includes('reviewer');
  const signatureRows = await db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, version.id))
    .orderBy(asc(signatures.id));
  const [signedOutput] = await db
    .select()
    .from(signedOutputs)
    .where(eq(signedOutputs.reportVersionId, version.id))
    .orderBy(desc(signedOutputs.signatureCount), desc(signedOutputs.id))
    .limit(1);
  const [author] = await db
    .select({ fullName: users.fullName })
    .from(users)
    .where(eq(users.id, report.authorId));
  const lock = canAct ? await signingLock(db, actor.id) : { locked: false, until: null };
  return {
    report: {
      id: report.id,
      number: report.reportNumber,
      title: report.title,
      author: author?.fullName ?? '',
    },
    version: {
      number: version.versionNumber,
      renderStatus: version.renderStatus,
      ready,
      pdfSha256: version.pdfSha256,
      pdfUrl: ready ? `/api/reports/${report.id}/versions/${version.versionNumber}/pdf` : null,
      htmlUrl: ready ? `/api/reports/${report.id}/versions/${version.versionNumber}/html` : null,
    },
    review: {
      state: review.state,
      stateText: STATE_WORDS[review.state],
      round: review.round,
      lastComment: review.lastComment,
      returned: review.state === 'returned',
      signed: review.state === 'signed',
      inReview: review.state === 'in_review',
    },
    assigned: assigned.map((person) => ({ ...person, isMe: person.id === actor.id })),
    rounds: [...new Set(rounds.map((row) => row.round))].map((round) => ({
      round,
      reviewers: rounds
        .filter((row) => row.round === round)
        .map((row) => row.name)
        .join(', '),
    })),
    isAuthor,
    canSubmit,
    canAct,
    authorTriesToSign: ready && review.state === 'in_review' && authors.has(actor.id),
    candidates: canSubmit ? await reviewerCandidates(db, actor.organisationId, authors) : [],
    meanings: await signatureMeanings(db, actor.organisationId),
    needsIdentity: session.firstSigningDone !== true,
    lock,
    timeZone,
    signatures: signatureRows.map((row) => ({
      name: row.signerPrintedName,
      meaning: row.meaning,
      comment: row.comment,
      signedAtText: `${isoDateTime(row.signedAt, row.timeZone)} (${row.timeZone})`,
      reviewedPdfSha256: row.reviewedPdfSha256,
      signedPdfSha256: row.signedPdfSha256,
    })),
    signedOutput: signedOutput
      ? {
          sha256: signedOutput.pdfSha256,
          byteSize: signedOutput.pdfByteSize,
          downloadUrl: `${reviewPath(report.id, version.versionNumber)}/signed.pdf`,
        }
      : null,
  };
}
