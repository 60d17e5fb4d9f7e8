import { eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { organisations, reports, reportVersions, signedOutputs } from '../../platform/db/schema/index.ts';
import { logger } from '../../platform/logging/logger.ts';
import { sha256Hex } from '../reports/index.ts';
import { organisationSigningIdentity, verifyPdfSeal } from '../signing/index.ts';
import { signaturesOf } from './verification.ts';

/**
 * The answer the public check page gives to someone outside the organisation who holds a PDF:
 * only whether it is a PDF Rateledger sealed and that is unaltered, its report number and
 * version, and who signed it, when, with what meaning (21 CFR 11.10(a), "the ability to discern
 * invalid or altered records"; 11.50(a), the manifestation's name, date and time, and meaning).
 *
 * It is looked up by the file itself, never by a report number: the file's SHA-256 must be one of
 * the stored signed outputs (of any organisation — whoever holds the exact bytes learns nothing
 * they do not hold already), and the PAdES seal inside it must verify against the CA Rateledger
 * trusts. One changed byte changes the hash, so an altered file is simply "no".
 *
 * Deliberately left out: the organisation's name (it is printed on the report and in the seal's
 * certificate already; repeating it from the database would add no assurance and would turn the
 * page into a way to learn about the organisation), the report title, signers' comments, the
 * analysis and every other record. An unsigned rendition is "no" without saying that a draft of
 * that number exists.
 */
export interface PublicSignature {
  signerName: string;
  meaning: string;
  signedAtText: string;
}

export type PublicVerification =
  | { sealed: true; reportNumber: string; versionNumber: number; signatures: PublicSignature[] }
  | { sealed: false; reason: string };

const NOT_SEALED =
  'This file is not a PDF that Rateledger sealed, or it has been changed since it was sealed: no sealed record has exactly these bytes.';

export async function checkPublicPdf(db: Executor, bytes: Buffer): Promise<PublicVerification> {
  const [match] = await db
    .select({
      versionId: reportVersions.id,
      versionNumber: reportVersions.versionNumber,
      reportNumber: reports.reportNumber,
      signatureCount: signedOutputs.signatureCount,
      organisationName: organisations.name,
      timeZone: organisations.timeZone,
    })
    .from(signedOutputs)
    .innerJoin(reportVersions, eq(reportVersions.id, signedOutputs.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .innerJoin(organisations, eq(organisations.id, reports.organisationId))
    .where(eq(signedOutputs.pdfSha256, sha256Hex(bytes)));
  if (!match) return { sealed: false, reason: NOT_SEALED };

  let sealVerifies = false;
  try {
    // The identity exists already: this organisation sealed the matched output with it.
    const identity = await organisationSigningIdentity(match.organisationName);
    const seal = await verifyPdfSeal(bytes, { caPem: identity.caPem });
    sealVerifies = seal.signed && seal.valid && seal.trusted;
  } catch (error) {
    logger.error({ err: error }, 'public seal check could not run');
    return {
      sealed: false,
      reason: 'The seal could not be checked on this server right now. Try again later.',
    };
  }
  if (!sealVerifies)
    return {
      sealed: false,
      reason: 'The file matches a sealed record, but its seal does not verify on this server.',
    };

  // The signatures this output carries: the version's first `signatureCount` (a later signature
  // makes a new output, so an earlier file does not show signatures it does not contain).
  const signed = (await signaturesOf(db, match.versionId, match.timeZone)).slice(0, match.signatureCount);
  return {
    sealed: true,
    reportNumber: match.reportNumber,
    versionNumber: match.versionNumber,
    signatures: signed.map(({ signerName, meaning, signedAtText }) => ({
      signerName,
      meaning,
      signedAtText,
    })),
  };
}
