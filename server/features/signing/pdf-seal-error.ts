/**
 * Why a PDF could not be sealed, in words a user can act on. `code` lets callers map the case
 * to an HTTP status (all are the caller's input problems except `signature-too-large`, a
 * configuration problem).
 *
 * Example: new PdfSealError('not-pdf', 'The file is not a PDF.').code → 'not-pdf'.
 */
export type PdfSealErrorCode = 'not-pdf' | 'encrypted' | 'no-pages' | 'unreadable' | 'signature-too-large';

export class PdfSealError extends Error {
  constructor(
    readonly code: PdfSealErrorCode,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
    this.name = 'PdfSealError';
  }
}
