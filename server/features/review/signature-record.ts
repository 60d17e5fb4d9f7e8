import { eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Transaction } from '../../platform/db/client.ts';
import { reportReviews, signatures, signedOutputs, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { MailMessage } from '../../platform/mail/mail-transport.ts';
import { type ConfirmedChecklist, confirmedChecklist } from './checklist-confirmation.ts';
import { reportSignedMessage } from './review-mail.ts';
import { stateInWords } from './review-policy.ts';
import { loadReviewVersion, type ReviewVersion } from './review-version.ts';
import { needsBothSignatureComponents } from './signature-components.ts';
import type { SignedPdf, Signer, SigningContext, SignReportInput } from './signing-context.ts';
import { clearSigningFailures } from './signing-lockout.ts';

/** One signature being recorded: who, what they typed, and the signed PDF already stored. */
export interface SignatureBeingRecorded {
  signer: Signer;
  request: SignReportInput;
  reviewedPdfSha256: string;
  signed: SignedPdf;
}

/**
 * Takes the version's review row FOR UPDATE and checks nothing moved while the PDF was printed
 * (another reviewer signed, or the author's submission was returned); 409 otherwise.
 */
export async function lockVersionForSigning(
  tx: Transaction,
  context: SigningContext,
  subject: ReviewVersion,
): Promise<void> {
  const { report, version, review } = subject;
  const target = { reportId: report.id, versionNumber: version.versionNumber };
  const locked = await loadReviewVersion(tx, context.actor.organisationId, target, { lock: true });
  if (locked.review.state !== 'in_review' || locked.review.round !== review.round)
    throw new HttpError(
      409,
      `${report.reportNumber} version ${version.versionNumber} changed while you signed (now ${stateInWords(locked.review.state)}); nothing was signed.`,
    );
}

/**
 * The signature row (linked to the reviewed and the signed PDF's SHA-256, 21 CFR 11.70), with the
 * review checklist version confirmed and a copy of its items; returns its id.
 */
async function insertSignature(
  tx: Transaction,
  context: SigningContext,
  subject: ReviewVersion,
  signature: SignatureBeingRecorded,
): Promise<{ id: number; checklist: ConfirmedChecklist }> {
  const { signer, request, signed } = signature;
  // Checked again under the transaction: an admin may have saved a new checklist meanwhile (409).
  const checklist = await confirmedChecklist(tx, context.actor.organisationId, request);
  const [row] = await tx
    .insert(signatures)
    .values({
      organisationId: context.actor.organisationId,
      reportVersionId: subject.version.id,
      signerId: context.actor.id,
      signerPrintedName: signer.fullName,
      meaning: request.meaning,
      comment: request.comment || null,
      signedAt: signed.signedAt,
      timeZone: signed.timeZone,
      reviewedPdfSha256: signature.reviewedPdfSha256,
      signedPdfSha256: signed.sha256,
      checklistVersionId: checklist?.versionId ?? null,
      checklistConfirmed: checklist?.items ?? null,
    })
    .returning({ id: signatures.id });
  return { id: row!.id, checklist };
}

/** `report.signed`, with everything the signature row holds and which components were used. */
async function appendSignedEvent(
  tx: Transaction,
  context: SigningContext,
  subject: ReviewVersion,
  signature: SignatureBeingRecorded & { id: number; checklist: ConfirmedChecklist },
): Promise<void> {
  const { actor } = context;
  const { report, version, review } = subject;
  const { signer, request, signed } = signature;
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
      versionNumber: version.versionNumber,
      state: 'signed',
      // The round does not change by signing; leaving it out read as "round removed".
      round: review.round,
      signatureId: signature.id,
      signerPrintedName: signer.fullName,
      meaning: request.meaning,
      comment: request.comment || null,
      signedAt: signed.signedAt.toISOString(),
      timeZone: signed.timeZone,
      reviewedPdfSha256: signature.reviewedPdfSha256,
      signedPdfSha256: signed.sha256,
      signedPdfByteSize: signed.byteSize,
      checklistVersionId: signature.checklist?.versionId ?? null,
      checklistConfirmed: signature.checklist?.items ?? null,
      identityComponents: needsBothSignatureComponents(context.session)
        ? ['user ID', 'password']
        : ['password'],
    },
    context: context.audit,
  });
}

/**
 * Inserts the signature and the signed output, sets the review `signed` — after which the
 * database refuses any change —, clears the signer's failed attempts and appends
 * `report.signed`. Returns the signature's id.
 */
export async function recordSignature(
  tx: Transaction,
  context: SigningContext,
  subject: ReviewVersion,
  signature: SignatureBeingRecorded,
): Promise<number> {
  const versionId = subject.version.id;
  const { id, checklist } = await insertSignature(tx, context, subject, signature);
  await tx.insert(signedOutputs).values({
    reportVersionId: versionId,
    pdfSha256: signature.signed.sha256,
    pdfByteSize: signature.signed.byteSize,
    signatureCount: signature.signed.signatureCount,
  });
  await tx
    .update(reportReviews)
    .set({ state: 'signed', updatedAt: sql`now()` })
    .where(eq(reportReviews.reportVersionId, versionId));
  await clearSigningFailures(tx, context.actor.id);
  await appendSignedEvent(tx, context, subject, { ...signature, id, checklist });
  return id;
}

/** The message telling the author their version was signed (none if the author row is gone). */
export async function signedMail(
  tx: Transaction,
  subject: ReviewVersion,
  signature: SignatureBeingRecorded,
): Promise<MailMessage[]> {
  const [author] = await tx.select().from(users).where(eq(users.id, subject.report.authorId));
  if (!author) return [];
  return [
    reportSignedMessage(subject, {
      author,
      signerName: signature.signer.fullName,
      meaning: signature.request.meaning,
      signedAt: signature.signed.signedAt,
      timeZone: signature.signed.timeZone,
    }),
  ];
}
