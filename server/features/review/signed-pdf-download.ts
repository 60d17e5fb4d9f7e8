import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { logger } from '../../platform/logging/logger.ts';
import { type ReportStorage, sha256Hex } from '../../platform/storage/report-storage.ts';
import { latestSignedOutput } from '../signing/index.ts';
import type { ReviewTarget } from './review-action.ts';
import { loadReviewVersion } from './review-version.ts';

export interface SignedPdfFile {
  pdf: Buffer;
  sha256: string;
  fileName: string;
}

/**
 * The newest signed PDF of a version of the actor's organisation, read from the report store and
 * checked against the SHA-256 its record holds before it is sent. Throws 404 (no such version, or
 * not signed yet), 500 (the stored file does not match its record; logged), 503 (not in the store).
 */
export async function signedPdfDownload(options: {
  db: Executor;
  storage: ReportStorage;
  actor: SessionUser;
  target: ReviewTarget;
  requestId: string | null;
}): Promise<SignedPdfFile> {
  const { db, storage, target } = options;
  const { report, version } = await loadReviewVersion(db, options.actor.organisationId, target);
  const label = `${report.reportNumber} version ${version.versionNumber}`;
  const output = await latestSignedOutput(db, version.id);
  if (!output) throw new HttpError(404, `${label} has not been signed yet.`);
  const pdf = await storage.readPdf(output.pdfSha256).catch(() => null);
  if (pdf && sha256Hex(pdf) !== output.pdfSha256) {
    logger.error(
      { reqId: options.requestId, pdfSha256: output.pdfSha256 },
      'stored signed PDF does not match its record',
    );
    throw new HttpError(
      500,
      'The stored signed PDF does not match its record; it has not been sent. Tell your administrator.',
    );
  }
  if (!pdf) throw new HttpError(503, `The signed PDF of ${label} is not in the report store.`);
  return {
    pdf,
    sha256: output.pdfSha256,
    fileName: `${report.reportNumber}-v${version.versionNumber}-signed.pdf`,
  };
}
