import { asc, eq, sql } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { signatures } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { logger } from '../../platform/logging/logger.ts';
import {
  organisationSigningIdentity,
  printSignedPdf,
  type SignatureEntry,
  storeSignedPdf,
} from '../signing/index.ts';
import { confirmedChecklist } from './checklist-confirmation.ts';
import { organisationOf } from './organisation-record.ts';
import type { ReviewVersion } from './review-version.ts';
import type { SignedPdf, Signer, SigningContext, SignReportInput } from './signing-context.ts';

/** The database clock now, to the whole second (what the manifestation prints). */
async function signingClock(db: Executor): Promise<Date> {
  const result = await db.execute<{ ms: string }>(
    sql`select (extract(epoch from date_trunc('second', now())) * 1000)::bigint::text as ms`,
  );
  return new Date(Number(result.rows[0]!.ms));
}

/** The signatures already on the version, oldest first, as the signatures page prints them. */
async function earlierSignatures(db: Executor, versionId: number): Promise<SignatureEntry[]> {
  const rows = await db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, versionId))
    .orderBy(asc(signatures.id));
  return rows.map((row) => ({
    name: row.signerPrintedName,
    meaning: row.meaning,
    signedAt: row.signedAt,
    timeZone: row.timeZone,
    comment: row.comment,
    checklistConfirmed: row.checklistConfirmed ?? [],
  }));
}

/**
 * Prints the version again with the new signature on its signatures page, seals it and stores
 * it, before any database row names the file (`signed-output.ts`). Runs outside the signing
 * transaction: printing takes a browser's time. Throws 503 when the PDF cannot be produced;
 * nothing is signed then.
 */
export async function produceSignedPdf(
  context: SigningContext,
  subject: ReviewVersion,
  signature: { signer: Signer; request: SignReportInput },
): Promise<SignedPdf> {
  const { db } = context;
  const [organisation, signedAt, earlier, checklist] = await Promise.all([
    organisationOf(db, context.actor.organisationId),
    signingClock(db),
    earlierSignatures(db, subject.version.id),
    confirmedChecklist(db, context.actor.organisationId, signature.request),
  ]);
  const entries: SignatureEntry[] = [
    ...earlier,
    {
      name: signature.signer.fullName,
      meaning: signature.request.meaning,
      signedAt,
      timeZone: organisation.timeZone,
      comment: signature.request.comment || null,
      checklistConfirmed: checklist?.items ?? [],
    },
  ];
  try {
    const identity = await organisationSigningIdentity(organisation.name);
    const printed = await printSignedPdf(db, subject.version.id, entries, {
      meaning: signature.request.meaning,
      signerName: signature.signer.fullName,
      signingTime: signedAt,
      identity,
    });
    const sha256 = await storeSignedPdf(context.storage, printed.pdf);
    return {
      signedAt,
      timeZone: organisation.timeZone,
      sha256,
      byteSize: printed.pdf.byteLength,
      signatureCount: entries.length,
    };
  } catch (error) {
    logger.error(
      { err: error, reportId: subject.report.id, version: subject.version.versionNumber },
      'signed PDF could not be produced',
    );
    throw new HttpError(
      503,
      'The signed PDF could not be produced, so nothing was signed. Try again in a moment; if it keeps failing, tell your administrator.',
    );
  }
}
