import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import type { ReportStorage } from '../../platform/storage/report-storage.ts';
import { versionPdf } from '../reports/index.ts';
import type { ReviewTarget } from './review-action.ts';

export interface SignedPdfFile {
  pdf: Buffer;
  sha256: string;
  fileName: string;
}

/**
 * The newest signed PDF of a version of the actor's organisation: the reports feature's one
 * download, asked for the sealed PDF only. Throws 404 (no such version, or not signed yet), 500
 * (the stored file does not match its record; logged), 503 (not in the store).
 */
export async function signedPdfDownload(options: {
  db: Executor;
  storage: ReportStorage;
  actor: SessionUser;
  target: ReviewTarget;
  requestId: string | null;
}): Promise<SignedPdfFile> {
  const { db, storage, target } = options;
  return versionPdf({
    db,
    storage,
    organisationId: options.actor.organisationId,
    reportId: target.reportId,
    versionNumber: target.versionNumber,
    requestId: options.requestId,
    kind: 'sealed',
  });
}
