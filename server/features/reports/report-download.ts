import type { Executor } from '../../platform/db/client.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { logger } from '../../platform/logging/logger.ts';
import type { ReportStorage } from '../../platform/storage/report-storage.ts';
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
 * The rendered (unsigned) PDF of a report version of the organisation, read from the report store
 * and checked against the SHA-256 its record holds before it is sent (21 CFR 11.10(c): records are
 * protected so that they can be retrieved accurately). Throws 404 (no such version), 409 (not
 * rendered), 500 (the stored file does not match its record; logged), 503 (not in the store).
 */
export async function versionPdf(
  request: VersionRequest & { storage: ReportStorage; requestId: string | null },
): Promise<VersionPdf> {
  const { storage, versionNumber } = request;
  const output = await getVersionOutput(request.db, request.organisationId, request.reportId, versionNumber);
  if (output.renderStatus !== 'ready' || !output.pdfSha256) {
    throw notReady(output.reportNumber, versionNumber, output.renderStatus);
  }
  const pdf = await storage.readVersionPdf(output.versionId, output.pdfSha256);
  if (pdf) {
    return { pdf, sha256: output.pdfSha256, fileName: `${output.reportNumber}-v${versionNumber}.pdf` };
  }
  if (await storage.hasPdf(output.pdfSha256)) {
    logger.error(
      {
        reqId: request.requestId,
        pdfSha256: output.pdfSha256,
        reportId: request.reportId,
        version: versionNumber,
      },
      'stored PDF does not match its record',
    );
    throw new HttpError(
      500,
      'The stored PDF does not match its record; it has not been sent. Tell your administrator.',
    );
  }
  throw new HttpError(
    503,
    `The PDF of ${output.reportNumber} version ${versionNumber} is not in the report store.`,
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
