import { anchorAuditChainNow } from '../../platform/audit/audit-anchoring.ts';
import { commitThenMail } from '../../platform/mail/mail-transport.ts';
import { isoDateTime } from '../reports/index.ts';
import { assertRecordUnchanged } from './record-stamp.ts';
import type { ReviewTarget } from './review-action.ts';
import { loadReviewVersion } from './review-version.ts';
import { lockVersionForSigning, recordSignature, signedMail } from './signature-record.ts';
import { produceSignedPdf } from './signed-pdf-production.ts';
import { checkMaySign, verifySignatureComponents } from './signing-checks.ts';
import type { SigningContext, SignReportInput } from './signing-context.ts';

/**
 * Electronic signing of a report version (21 CFR 11.50, 11.70, 11.200, 11.300(d); EU GMP
 * Annex 11 §14).
 *
 * Who: a reviewer assigned to the version's current round, never its author (refused with the
 * audit event `signature.refused-own-report`; the rule is `review-policy.ts`). How: the meaning
 * chosen from the organisation's list, an optional comment, and both identification components —
 * user ID (the e-mail address) and password — on the first signing of a session, the password
 * alone on later ones (11.200(a)(1)(i)). The session says which through `firstSigningDone`, set by
 * the route after a signing succeeded; signing in again starts a new session and asks for both.
 *
 * A wrong ID or password is refused and recorded (`signature.failed`); repeated failures lock
 * signing (`signing-lockout.ts`).
 *
 * The record must be as the form showed it: the form's `recordStamp` is compared with the
 * record's now, before the password is checked and again in the signing transaction
 * (`record-stamp.ts`; 409 when the study, data, analysis or review moved on meanwhile).
 *
 * On success, in this order: the signing time is read from the database clock (whole seconds,
 * so the printed time and the stored one are the same instant); the report is printed again with
 * the signatures page filled in and sealed, and the file is stored (`signed-pdf-production.ts`);
 * then one transaction records the signature, the signed output, the `signed` review and
 * `report.signed` (`signature-record.ts`). The author is told by mail after the commit.
 */

export interface SignOutcome {
  signatureId: number;
  signedAt: Date;
  /** The signing time as printed on the signatures page: ISO 8601 with offset, and the zone. */
  signedAtText: string;
  signedPdfSha256: string;
  reviewedPdfSha256: string;
}

export interface SignReportVersionOptions {
  target: ReviewTarget;
  /** The sign form, parsed with `signReportSchema`. */
  request: SignReportInput;
  context: SigningContext;
}

/**
 * Signs version `target.versionNumber` of report `target.reportId` as `context.actor`. Throws
 * HttpError: 403 (own report or not assigned; both recorded), 409 (not in review, already signed,
 * or the PDF shown is not the version's, or the record changed since the form was shown), 423 (signing locked), 401 (wrong user ID or password;
 * recorded), 400 (bad fields), 503 (the signed PDF could not be produced; nothing was signed).
 */
export async function signReportVersion({
  target,
  request,
  context,
}: SignReportVersionOptions): Promise<SignOutcome> {
  const subject = await loadReviewVersion(context.db, context.actor.organisationId, target);
  const { reviewedPdfSha256 } = await checkMaySign(context, subject, request);
  await assertRecordUnchanged(context.db, subject, request.recordStamp);
  const signer = await verifySignatureComponents(context, subject, request);
  const signed = await produceSignedPdf(context, subject, { signer, request });
  const signature = { signer, request, reviewedPdfSha256, signed };
  const { result: signatureId } = await commitThenMail(context.db, async (tx) => {
    await lockVersionForSigning(tx, context, subject);
    await assertRecordUnchanged(tx, subject, request.recordStamp);
    const id = await recordSignature(tx, context, subject, signature);
    return { result: id, mail: await signedMail(tx, subject, signature) };
  });
  // Every signature is anchored outside the database at once (docs/audit-trail-security.md).
  await anchorAuditChainNow(context.db);
  return {
    signatureId,
    signedAt: signed.signedAt,
    signedAtText: `${isoDateTime(signed.signedAt, signed.timeZone)} (${signed.timeZone})`,
    signedPdfSha256: signed.sha256,
    reviewedPdfSha256,
  };
}
