import { and, asc, eq, sql } from 'drizzle-orm';
import { type SignReportRequest, signReportSchema } from '../../../shared/api/review.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { verifyPassword } from '../../platform/auth/passwords.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  memberships,
  organisations,
  reportReviews,
  signatures,
  signedOutputs,
  signingLockouts,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { logger } from '../../platform/logging/logger.ts';
import { commitThenMail, type MailMessage, sendMail } from '../../platform/mail/mail-transport.ts';
import { reportSignedMail } from '../../platform/mail/messages.ts';
import type { ReportStorage } from '../reports/index.ts';
import { isoDateTime } from '../reports/index.ts';
import {
  organisationSigningIdentity,
  printSignedPdf,
  type SignatureEntry,
  storeSignedPdf,
} from '../signing/index.ts';
import {
  type AuditContext,
  authorsOf,
  currentAssignments,
  loadReviewVersion,
  type ReviewVersion,
  refuse,
  reviewPath,
  signatureMeanings,
  signingLock,
} from './review.ts';

/**
 * Electronic signing of a report version (21 CFR 11.50, 11.70, 11.200, 11.300(d); EU GMP
 * Annex 11 §14).
 *
 * Who: a reviewer assigned to the version's current round, never its author (refused with the
 * audit event `signature.refused-own-report`). How: the meaning chosen from the organisation's
 * list, an optional comment, and both identification components — user ID (the e-mail address)
 * and password — on the first signing of a session, the password alone on later ones
 * (11.200(a)(1)(i)). The session says which through `firstSigningDone`, set by the route after a
 * signing succeeded; signing in again starts a new session and asks for both again.
 *
 * A wrong ID or password is refused and recorded (`signature.failed`); after the organisation's
 * `lockout_threshold` failures in a row signing is locked for `lockout_minutes`
 * (`signature.locked`, and the organisation's administrators are told by mail at once — the
 * "detect and report" of 11.300(d)). Signing in stays possible; only signing is locked.
 *
 * On success, in this order: the signing time is read from the database clock (whole seconds,
 * so the printed time and the stored one are the same instant); the report is printed again with
 * the signatures page filled in and sealed (`signed-output.ts`); the file is stored; then one
 * transaction inserts the signature (with the reviewed PDF's and the signed PDF's SHA-256), the
 * signed output, sets the review `signed` — after which the database refuses any change — and
 * appends `report.signed`. The author is told by mail after the commit.
 */

export interface SigningSession {
  firstSigningDone?: boolean;
}

export interface SignOutcome {
  signatureId: number;
  signedAt: Date;
  /** The signing time as printed on the signatures page: ISO 8601 with offset, and the zone. */
  signedAtText: string;
  signedPdfSha256: string;
  reviewedPdfSha256: string;
}

/** The database clock now, to the whole second (what the manifestation prints). */
async function signingClock(db: Executor): Promise<Date> {
  const result = await db.execute<{ ms: string }>(
    sql`select (extract(epoch from date_trunc('second', now())) * 1000)::bigint::text as ms`,
  );
  return new Date(Number(result.rows[0]!.ms));
}

async function organisationOf(db: Executor, organisationId: number) {
  const [row] = await db.select().from(organisations).where(eq(organisations.id, organisationId));
  if (!row) throw new HttpError(404, 'Your organisation was not found.');
  return row;
}

/** Counts a failed signing attempt; locks signing at the threshold. Returns the error to answer with. */
async function recordFailure(
  db: Database,
  actor: SessionUser,
  subject: ReviewVersion,
  reason: string,
  context: AuditContext,
): Promise<HttpError> {
  const organisation = await organisationOf(db, actor.organisationId);
  const outcome = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(signingLockouts)
      .values({ userId: actor.id, failedAttempts: 1 })
      .onConflictDoUpdate({
        target: signingLockouts.userId,
        set: { failedAttempts: sql`${signingLockouts.failedAttempts} + 1`, updatedAt: sql`now()` },
      })
      .returning({ failures: signingLockouts.failedAttempts });
    const failures = row!.failures;
    const audit = {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      recordType: 'report_version',
      recordId: subject.version.id,
      context,
    };
    await appendAuditEvent(tx, {
      ...audit,
      action: 'signature.failed',
      after: {
        reportNumber: subject.report.reportNumber,
        versionNumber: subject.version.versionNumber,
        reason,
        consecutiveFailures: failures,
      },
    });
    const lock = failures >= organisation.lockoutThreshold;
    if (lock) {
      await tx
        .update(signingLockouts)
        .set({
          failedAttempts: 0,
          lockedUntil: sql`now() + make_interval(mins => ${organisation.lockoutMinutes})`,
          updatedAt: sql`now()`,
        })
        .where(eq(signingLockouts.userId, actor.id));
      await appendAuditEvent(tx, {
        ...audit,
        action: 'signature.locked',
        recordType: 'user',
        recordId: actor.id,
        after: { afterFailures: failures, minutes: organisation.lockoutMinutes },
      });
    }
    return { failures, lock };
  });
  if (outcome.lock) {
    await alertAdministrators(db, actor, organisation.lockoutMinutes, outcome.failures);
    return new HttpError(
      423,
      `Too many failed signing attempts: signing is locked for ${organisation.lockoutMinutes} minutes. Your administrators have been told.`,
    );
  }
  const left = organisation.lockoutThreshold - outcome.failures;
  return new HttpError(
    401,
    `The user ID or password is not right; nothing was signed. ${left} attempt${left === 1 ? '' : 's'} left before signing locks.`,
    [{ field: 'password', message: 'Re-enter your own password.' }],
  );
}

/** 21 CFR 11.300(d): attempts at unauthorised use are reported at once to those responsible. */
async function alertAdministrators(db: Database, actor: SessionUser, minutes: number, failures: number) {
  const admins = await db
    .selectDistinct({ fullName: users.fullName, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, actor.organisationId),
        eq(memberships.role, 'admin'),
        eq(users.active, true),
      ),
    );
  if (admins.length === 0) return;
  const text = [
    'Hello,',
    `Electronic signing by ${actor.fullName} (${actor.email}) is locked for ${minutes} minutes after ${failures} failed signing attempts in a row.`,
    'If this was not them, their password may be known to someone else: check the audit trail (action signature.failed) and reset the password.',
    '--',
    'This message was sent by Rateledger. Do not reply to it.',
  ].join('\n\n');
  await sendMail(db, {
    organisationId: actor.organisationId,
    kind: 'signing-locked',
    to: admins.map((admin) => ({ name: admin.fullName, address: admin.email })),
    subject: `Signing locked for ${actor.fullName} after failed attempts`,
    text,
    record: { type: 'user', id: actor.id },
  });
}

/**
 * Signs version `versionNumber` of report `reportId` as `actor`. Throws HttpError: 403 (own report
 * or not assigned; both recorded), 409 (not in review, already signed, or the PDF shown is not the
 * version's), 423 (signing locked), 401 (wrong user ID or password; recorded), 400 (bad fields),
 * 503 (the signed PDF could not be produced; nothing was signed).
 */
export async function signReportVersion(
  db: Database,
  storage: ReportStorage,
  actor: SessionUser,
  session: SigningSession,
  reportId: number,
  versionNumber: number,
  request: SignReportRequest,
  context: AuditContext,
): Promise<SignOutcome> {
  const input = signReportSchema.parse(request);
  const subject = await loadReviewVersion(db, actor.organisationId, reportId, versionNumber);
  const { report, version, review } = subject;
  if (authorsOf(subject).has(actor.id)) {
    await refuse(
      db,
      actor,
      'signature.refused-own-report',
      subject,
      { attempted: 'sign' },
      new HttpError(
        403,
        'You cannot sign a report you authored: segregation of duties needs another person to review it.',
      ),
      context,
    );
  }
  if (version.renderStatus !== 'ready' || !version.pdfSha256)
    throw new HttpError(
      409,
      `Version ${versionNumber} is ${version.renderStatus}; only a rendered version can be signed.`,
    );
  if (review.state === 'signed')
    throw new HttpError(
      409,
      `${report.reportNumber} version ${versionNumber} is already signed and locked; a correction is a new version.`,
    );
  if (review.state !== 'in_review')
    throw new HttpError(
      409,
      `Version ${versionNumber} is ${review.state.replace('_', ' ')}, not in review; it cannot be signed now.`,
    );
  const assigned = await currentAssignments(db, version.id, review.round);
  if (!actor.roles.includes('reviewer') || !assigned.some((person) => person.id === actor.id)) {
    await refuse(
      db,
      actor,
      'signature.refused-not-assigned',
      subject,
      { attempted: 'sign' },
      new HttpError(403, 'Only a reviewer assigned to this round may sign the report.'),
      context,
    );
  }
  const lock = await signingLock(db, actor.id);
  if (lock.locked) {
    await refuse(
      db,
      actor,
      'signature.refused-locked',
      subject,
      { lockedUntil: lock.until },
      new HttpError(
        423,
        `Signing is locked after repeated failed attempts until ${lock.until}. Try again then, or ask an administrator.`,
      ),
      context,
    );
  }
  const meanings = await signatureMeanings(db, actor.organisationId);
  if (!meanings.includes(input.meaning))
    throw new HttpError(400, 'Some fields are not valid.', [
      { field: 'meaning', message: `Choose one of: ${meanings.join(', ')}.` },
    ]);
  if (input.reviewedSha256 !== version.pdfSha256)
    throw new HttpError(
      409,
      'The PDF shown on the form is not this version’s stored PDF. Reload the page and check it again.',
    );
  const needsIdentity = session.firstSigningDone !== true;
  if (needsIdentity && !input.identity)
    throw new HttpError(400, 'Some fields are not valid.', [
      {
        field: 'identity',
        message: 'Enter your user ID (your e-mail address): the first signing of a session needs both.',
      },
    ]);

  const [signer] = await db.select().from(users).where(eq(users.id, actor.id));
  const identityOk = !needsIdentity || input.identity!.toLowerCase() === signer!.email.toLowerCase();
  const passwordOk = await verifyPassword(signer!.passwordHash, input.password);
  if (!identityOk || !passwordOk || !signer!.active) {
    const reason = !identityOk ? 'user ID does not match the signed-in user' : 'wrong password';
    throw await recordFailure(db, actor, subject, reason, context);
  }

  const organisation = await organisationOf(db, actor.organisationId);
  const signedAt = await signingClock(db);
  const earlier = await db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, version.id))
    .orderBy(asc(signatures.id));
  const entry: SignatureEntry = {
    name: signer!.fullName,
    meaning: input.meaning,
    signedAt,
    timeZone: organisation.timeZone,
    comment: input.comment || null,
  };
  const entries: SignatureEntry[] = [
    ...earlier.map((row) => ({
      name: row.signerPrintedName,
      meaning: row.meaning,
      signedAt: row.signedAt,
      timeZone: row.timeZone,
      comment: row.comment,
    })),
    entry,
  ];
  let signedPdfSha256: string;
  let signedPdf: Buffer;
  try {
    const identity = await organisationSigningIdentity(organisation.name);
    const printed = await printSignedPdf(db, version.id, entries, {
      meaning: input.meaning,
      signerName: signer!.fullName,
      signingTime: signedAt,
      identity,
    });
    signedPdf = printed.pdf;
    signedPdfSha256 = await storeSignedPdf(storage, printed.pdf);
  } catch (error) {
    logger.error(
      { err: error, reportId: report.id, version: versionNumber },
      'signed PDF could not be produced',
    );
    throw new HttpError(
      503,
      'The signed PDF could not be produced, so nothing was signed. Try again in a moment; if it keeps failing, tell your administrator.',
    );
  }

  const { result } = await commitThenMail(db, async (tx) => {
    const locked = await loadReviewVersion(tx, actor.organisationId, reportId, versionNumber, { lock: true });
    if (locked.review.state !== 'in_review' || locked.review.round !== review.round)
      throw new HttpError(
        409,
        `${report.reportNumber} version ${versionNumber} changed while you signed (now ${locked.review.state.replace('_', ' ')}); nothing was signed.`,
      );
    const [signature] = await tx
      .insert(signatures)
      .values({
        organisationId: actor.organisationId,
        reportVersionId: version.id,
        signerId: actor.id,
        signerPrintedName: signer!.fullName,
        meaning: input.meaning,
        comment: entry.comment,
        signedAt,
        timeZone: organisation.timeZone,
        reviewedPdfSha256: version.pdfSha256!,
        signedPdfSha256,
      })
      .returning({ id: signatures.id });
    await tx.insert(signedOutputs).values({
      reportVersionId: version.id,
      pdfSha256: signedPdfSha256,
      pdfByteSize: signedPdf.byteLength,
      signatureCount: entries.length,
    });
    await tx
      .update(reportReviews)
      .set({ state: 'signed', updatedAt: sql`now()` })
      .where(eq(reportReviews.reportVersionId, version.id));
    await tx
      .insert(signingLockouts)
      .values({ userId: actor.id, failedAttempts: 0 })
      .onConflictDoUpdate({
        target: signingLockouts.userId,
        set: { failedAttempts: 0, lockedUntil: null, updatedAt: sql`now()` },
      });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'report.signed',
      recordType: 'report_version',
      recordId: version.id,
      before: { state: 'in_review', round: review.round },
      after: {
        reportNumber: report.reportNumber,
        versionNumber,
        state: 'signed',
        signatureId: signature!.id,
        signerPrintedName: signer!.fullName,
        meaning: input.meaning,
        comment: entry.comment,
        signedAt: signedAt.toISOString(),
        timeZone: organisation.timeZone,
        reviewedPdfSha256: version.pdfSha256,
        signedPdfSha256,
        signedPdfByteSize: signedPdf.byteLength,
        identityComponents: needsIdentity ? ['user ID', 'password'] : ['password'],
      },
      context,
    });
    const [author] = await tx.select().from(users).where(eq(users.id, report.authorId));
    const mail: MailMessage[] = author
      ? [
          {
            organisationId: actor.organisationId,
            kind: 'report-signed',
            to: { name: author.fullName, address: author.email },
            ...reportSignedMail({
              reportNumber: report.reportNumber,
              reportTitle: report.title,
              versionNumber,
              reportPath: reviewPath(report.id, versionNumber),
              authorName: author.fullName,
              signerName: signer!.fullName,
              meaning: input.meaning,
              signedAt,
              timeZone: organisation.timeZone,
            }),
            record: { type: 'report_version', id: version.id },
          },
        ]
      : [];
    return { result: { signatureId: signature!.id }, mail };
  });
  return {
    signatureId: result.signatureId,
    signedAt,
    signedAtText: `${isoDateTime(signedAt, organisation.timeZone)} (${organisation.timeZone})`,
    signedPdfSha256,
    reviewedPdfSha256: version.pdfSha256,
  };
}
