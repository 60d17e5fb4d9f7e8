import { eq } from 'drizzle-orm';
import { verifyPassword } from '../../platform/auth/passwords.ts';
import { users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { confirmedChecklist } from './checklist-confirmation.ts';
import { loadReviewFacts } from './review-facts.ts';
import { decideSign } from './review-policy.ts';
import { enforceDecision, recordRefusal } from './review-refusals.ts';
import type { ReviewVersion } from './review-version.ts';
import { needsBothSignatureComponents, signatureComponentsProblem } from './signature-components.ts';
import { signatureMeanings } from './signature-meanings.ts';
import type { Signer, SigningContext, SignReportInput } from './signing-context.ts';
import { recordSigningFailure, signingLock } from './signing-lockout.ts';

const invalidField = (field: string, message: string) =>
  new HttpError(400, 'Some fields are not valid.', [{ field, message }]);

/**
 * Everything that may refuse a signature before a password is checked, in this order: who may
 * sign (the review policy; refusals recorded), the signing lock (recorded), the meaning, the PDF
 * the form showed, the review checklist (the version the form showed is the current one, 409,
 * and every item is confirmed, 400; `checklist-confirmation.ts`), and the user ID the session's
 * first signing needs. Returns the reviewed PDF's
 * SHA-256 (the version's stored one, which the form's was just checked against).
 */
export async function checkMaySign(
  context: SigningContext,
  subject: ReviewVersion,
  request: SignReportInput,
): Promise<{ reviewedPdfSha256: string }> {
  const { db, actor } = context;
  // Independent reads at once; the refusals below still come in the order above.
  const [facts, lock, meanings] = await Promise.all([
    loadReviewFacts(db, subject, actor),
    signingLock(db, actor.id),
    signatureMeanings(db, actor.organisationId),
  ]);
  await enforceDecision(context, subject, decideSign(facts), { attempted: 'sign' });
  if (lock.locked)
    await recordRefusal(context, subject, {
      auditAction: 'signature.refused-locked',
      error: new HttpError(
        423,
        `Signing is locked after repeated failed attempts until ${lock.until}. Try again then, or ask an administrator.`,
      ),
      detail: { lockedUntil: lock.until },
    });
  if (!meanings.includes(request.meaning))
    throw invalidField('meaning', `Choose one of: ${meanings.join(', ')}.`);
  if (request.reviewedSha256 !== subject.version.pdfSha256)
    throw new HttpError(
      409,
      'The PDF shown on the form is not this version’s stored PDF. Reload the page and check it again.',
    );
  await confirmedChecklist(db, actor.organisationId, request);
  if (needsBothSignatureComponents(context.session) && !request.identity)
    throw invalidField(
      'identity',
      'Enter your user ID (your e-mail address): the first signing of a session needs both.',
    );
  return { reviewedPdfSha256: request.reviewedSha256 };
}

/**
 * The signature components (21 CFR 11.200(a)): the typed user ID on the session's first signing,
 * and the password, against the signer's account as stored now. A failure is recorded and
 * counted towards the signing lock (`recordSigningFailure`), and thrown.
 */
export async function verifySignatureComponents(
  context: SigningContext,
  subject: ReviewVersion,
  request: SignReportInput,
): Promise<Signer> {
  const [signer] = await context.db.select().from(users).where(eq(users.id, context.actor.id));
  const passwordMatches = await verifyPassword(signer!.passwordHash, request.password);
  const problem = signatureComponentsProblem({
    needsBothComponents: needsBothSignatureComponents(context.session),
    typedIdentity: request.identity,
    accountEmail: signer!.email,
    passwordMatches,
    accountActive: signer!.active,
  });
  if (problem) throw await recordSigningFailure(context, subject, problem);
  return { id: signer!.id, fullName: signer!.fullName, email: signer!.email };
}
