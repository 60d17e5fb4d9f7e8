import { and, asc, eq, sql } from 'drizzle-orm';
import type { PdfVerification } from '../../../shared/api/review.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import {
  organisations,
  reports,
  reportVersions,
  signatures,
  signedOutputs,
} from '../../platform/db/schema/index.ts';
import { logger } from '../../platform/logging/logger.ts';
import { isoDateTime, sha256Hex } from '../reports/index.ts';
import { reviewPath, signedPdfPath } from '../review/index.ts';
import { organisationSigningIdentity, verifyPdfSeal } from '../signing/index.ts';

/**
 * Is this PDF the signed record it claims to be? Two independent checks:
 *
 * 1. **The records**: the file's SHA-256 is looked up among the organisation's signed outputs
 *    (and, failing that, its rendered but unsigned versions). An exact match names the report,
 *    the version and every signature — who, when, with what meaning. The signature records are
 *    linked to that hash (21 CFR 11.70), so a match is byte-for-byte identity with what was signed.
 * 2. **The seal**: the PAdES signature inside the file is checked with poppler's `pdfsig` against
 *    the organisation's CA (`verifyPdfSeal`): any changed byte breaks it.
 *
 * The verdict: `verified` when both agree; `altered` when the seal is present but broken, or the
 * seal is intact but the file is not one of the records; `unknown` otherwise (not a PDF, no seal,
 * no match). Only the caller's organisation is searched: another's records are "no match".
 * Never throws for bad input: garbage gets a verdict, not an error.
 */

type SignatureView = NonNullable<PdfVerification['record']>['signatures'][number];

export async function signaturesOf(
  db: Executor,
  versionId: number,
  timeZone: string,
): Promise<SignatureView[]> {
  const rows = await db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, versionId))
    .orderBy(asc(signatures.id));
  return rows.map((row) => ({
    signerName: row.signerPrintedName,
    meaning: row.meaning,
    comment: row.comment,
    signedAt: row.signedAt.toISOString(),
    signedAtText: `${isoDateTime(row.signedAt, row.timeZone || timeZone)} (${row.timeZone || timeZone})`,
    timeZone: row.timeZone,
  }));
}

export async function verifyPdf(
  db: Executor,
  actor: SessionUser,
  file: { bytes: Buffer; fileName: string },
): Promise<PdfVerification> {
  const sha256 = sha256Hex(file.bytes);
  const [organisation] = await db
    .select()
    .from(organisations)
    .where(eq(organisations.id, actor.organisationId));
  const timeZone = organisation?.timeZone ?? 'UTC';
  const [signedMatch] = await db
    .select({ versionId: reportVersions.id, versionNumber: reportVersions.versionNumber, report: reports })
    .from(signedOutputs)
    .innerJoin(reportVersions, eq(reportVersions.id, signedOutputs.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(and(eq(signedOutputs.pdfSha256, sha256), eq(reports.organisationId, actor.organisationId)));
  const [unsignedMatch] = signedMatch
    ? []
    : await db
        .select({
          versionId: reportVersions.id,
          versionNumber: reportVersions.versionNumber,
          report: reports,
        })
        .from(reportVersions)
        .innerJoin(reports, eq(reports.id, reportVersions.reportId))
        .where(and(eq(reportVersions.pdfSha256, sha256), eq(reports.organisationId, actor.organisationId)));
  const match = signedMatch ?? unsignedMatch;
  const record = match
    ? {
        reportId: match.report.id,
        reportNumber: match.report.reportNumber,
        reportTitle: match.report.title,
        versionNumber: match.versionNumber,
        reviewUrl: reviewPath(match.report.id, match.versionNumber),
        signatures: await signaturesOf(db, match.versionId, timeZone),
      }
    : null;

  let seal: PdfVerification['seal'];
  try {
    const identity = await organisationSigningIdentity(organisation?.name ?? 'organisation');
    const checked = await verifyPdfSeal(file.bytes, { caPem: identity.caPem });
    seal = {
      signed: checked.signed,
      valid: checked.valid,
      trusted: checked.trusted,
      signerSubject: checked.signerSubject,
      signingTime: checked.signingTime?.toISOString() ?? null,
      reason: checked.reason,
    };
  } catch (error) {
    logger.error({ err: error }, 'seal check could not run');
    seal = {
      signed: false,
      valid: false,
      trusted: false,
      signerSubject: null,
      signingTime: null,
      reason: 'The seal could not be checked on this server right now.',
    };
  }

  const kind = signedMatch ? 'signed-record' : unsignedMatch ? 'unsigned-version' : 'no-match';
  const { verdict, verdictKind } = judge(kind, seal, record);
  return {
    fileName: file.fileName,
    byteSize: file.bytes.length,
    sha256,
    match: kind,
    record,
    seal,
    verdict,
    verdictKind,
  };
}

function judge(
  kind: PdfVerification['match'],
  seal: PdfVerification['seal'],
  record: PdfVerification['record'],
): Pick<PdfVerification, 'verdict' | 'verdictKind'> {
  const name = record ? `${record.reportNumber} version ${record.versionNumber}` : '';
  if (kind === 'signed-record' && seal.valid && seal.trusted)
    return {
      verdictKind: 'verified',
      verdict: `This file is the signed record of ${name}, unchanged, and its seal verifies.`,
    };
  if (kind === 'signed-record')
    return {
      verdictKind: 'altered',
      verdict: `This file has the stored hash of ${name}, but its seal does not verify here: ${seal.reason}`,
    };
  if (kind === 'unsigned-version')
    return {
      verdictKind: 'unknown',
      verdict: `This is the unsigned rendered PDF of ${name}; it carries no signature. Download the signed PDF from the review page.`,
    };
  if (seal.signed && !seal.valid)
    return {
      verdictKind: 'altered',
      // The seal check's reason already says what was altered; say it once.
      verdict: `${seal.reason} It does not match any signed record.`,
    };
  if (seal.signed && seal.valid)
    return {
      verdictKind: 'altered',
      verdict:
        'The file carries an intact seal but does not match any signed record of your organisation: it is not one of your records (or was re-saved and sealed elsewhere).',
    };
  return {
    verdictKind: 'unknown',
    verdict: `This file does not match any signed record of your organisation. ${seal.reason}`,
  };
}

/** The signed outputs of a report, by its number (for the verification page's look-up). */
export async function signedRecordsOfReport(db: Executor, actor: SessionUser, reportNumber: string) {
  const [report] = await db
    .select()
    .from(reports)
    .where(
      and(
        eq(reports.organisationId, actor.organisationId),
        sql`upper(${reports.reportNumber}) = upper(${reportNumber})`,
      ),
    );
  if (!report) return null;
  const [organisation] = await db
    .select()
    .from(organisations)
    .where(eq(organisations.id, actor.organisationId));
  const outputs = await db
    .select({
      output: signedOutputs,
      versionNumber: reportVersions.versionNumber,
      versionId: reportVersions.id,
    })
    .from(signedOutputs)
    .innerJoin(reportVersions, eq(reportVersions.id, signedOutputs.reportVersionId))
    .where(eq(reportVersions.reportId, report.id))
    .orderBy(asc(reportVersions.versionNumber), asc(signedOutputs.id));
  const versions = await db
    .select({ versionNumber: reportVersions.versionNumber, renderStatus: reportVersions.renderStatus })
    .from(reportVersions)
    .where(eq(reportVersions.reportId, report.id))
    .orderBy(asc(reportVersions.versionNumber));
  return {
    reportId: report.id,
    reportNumber: report.reportNumber,
    title: report.title,
    versionCount: versions.length,
    signed: await Promise.all(
      outputs.map(async ({ output, versionNumber, versionId }) => ({
        versionNumber,
        sha256: output.pdfSha256,
        byteSize: output.pdfByteSize,
        reviewUrl: reviewPath(report.id, versionNumber),
        downloadUrl: signedPdfPath(report.id, versionNumber),
        signatures: await signaturesOf(db, versionId, organisation?.timeZone ?? 'UTC'),
      })),
    ),
  };
}
