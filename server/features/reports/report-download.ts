import { desc, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { signedOutputs } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { logger } from '../../platform/logging/logger.ts';
import { type ReportStorage, sha256Hex } from '../../platform/storage/report-storage.ts';
import { getVersionOutput } from './report-history.ts';

export interface VersionPdf {
  pdf: Buffer;
  sha256: string;
  fileName: string;
}

export interface VersionHtml {
  html: string;
  fileName: string;
}

interface VersionRequest {
  db: Executor;
  organisationId: number;
  reportId: number;
  versionNumber: number;
}

/**
 * Which PDF of a version: `current` is the sealed PDF once the version is signed and the
 * rendition before; `rendition` is always the rendered (unsigned) PDF; `sealed` only the sealed
 * one (404 before signing).
 */
export type PdfKind = 'current' | 'rendition' | 'sealed';

/** The newest sealed PDF of a version (a further signature makes a newer one), or null. */
async function newestSealedPdf(db: Executor, versionId: number) {
  const [row] = await db
    .select({ sha256: signedOutputs.pdfSha256 })
    .from(signedOutputs)
    .where(eq(signedOutputs.reportVersionId, versionId))
    .orderBy(desc(signedOutputs.signatureCount), desc(signedOutputs.id))
    .limit(1);
  return row ?? null;
}

/**
 * A PDF of a report version of the organisation (see `PdfKind`), read from the report store and
 * checked against the SHA-256 its record holds before it is sent (21 CFR 11.10(c): records are
 * protected so that they can be retrieved accurately). Throws 404 (no such version; `sealed`
 * before signing), 409 (not rendered), 500 (the stored file does not match its record; logged),
 * 503 (not in the store).
 */
export async function versionPdf(
  request: VersionRequest & { storage: ReportStorage; requestId: string | null; kind?: PdfKind },
): Promise<VersionPdf> {
  const { storage, versionNumber } = request;
  const kind = request.kind ?? 'current';
  const output = await getVersionOutput(request.db, request.organisationId, request.reportId, versionNumber);
  const label = `${output.reportNumber} version ${versionNumber}`;
  const baseName = `${output.reportNumber}-v${versionNumber}`;
  const sealed = kind === 'rendition' ? null : await newestSealedPdf(request.db, output.versionId);
  if (sealed) {
    const pdf = await storage.readPdf(sealed.sha256).catch(() => null);
    if (pdf && sha256Hex(pdf) === sealed.sha256)
      return { pdf, sha256: sealed.sha256, fileName: `${baseName}-signed.pdf` };
    if (pdf) throw mismatch(request, sealed.sha256);
    throw new HttpError(503, `The signed PDF of ${label} is not in the report store.`);
  }
  if (kind === 'sealed') throw new HttpError(404, `${label} has not been signed yet.`);
  if (output.renderStatus !== 'ready' || !output.pdfSha256) {
    throw notReady(output.reportNumber, versionNumber, output.renderStatus);
  }
  const pdf = await storage.readVersionPdf(output.versionId, output.pdfSha256);
  if (pdf) {
    const fileName = kind === 'rendition' ? `${baseName}-unsigned.pdf` : `${baseName}.pdf`;
    return { pdf, sha256: output.pdfSha256, fileName };
  }
  if (await storage.hasPdf(output.pdfSha256)) throw mismatch(request, output.pdfSha256);
  throw new HttpError(503, `The PDF of ${label} is not in the report store.`);
}

function mismatch(request: VersionRequest & { requestId: string | null }, pdfSha256: string): HttpError {
  logger.error(
    { reqId: request.requestId, pdfSha256, reportId: request.reportId, version: request.versionNumber },
    'stored PDF does not match its record',
  );
  return new HttpError(
    500,
    'The stored PDF does not match its record; it has not been sent. Tell your administrator.',
  );
}

/** The stored HTML of a rendered version exactly as it was printed. Throws 404 or 409 as `versionPdf`. */
export async function versionHtml(request: VersionRequest): Promise<VersionHtml> {
  const { versionNumber } = request;
  const output = await getVersionOutput(request.db, request.organisationId, request.reportId, versionNumber);
  if (output.renderStatus !== 'ready' || output.html === null) {
    throw notReady(output.reportNumber, versionNumber, output.renderStatus);
  }
  return { html: output.html, fileName: `${output.reportNumber}-v${versionNumber}.html` };
}

function notReady(reportNumber: string, version: number, status: string): HttpError {
  const what =
    status === 'failed'
      ? 'failed to render, so it has no output; render a new version'
      : `is ${status}; its output is available once it is ready`;
  return new HttpError(409, `${reportNumber} version ${version} ${what}.`);
}
