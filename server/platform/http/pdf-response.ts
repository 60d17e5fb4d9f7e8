import type { Response } from 'express';

/** A stored PDF as the services hand it to a route. */
export interface PdfFile {
  pdf: Uint8Array;
  fileName: string;
  sha256: string;
}

export interface PdfResponseOptions {
  /** `attachment` downloads the file; `inline` shows it in the browser's viewer. */
  disposition: 'attachment' | 'inline';
  /** The bytes under this URL never change (a rendition, a signed output), so it may be cached for good. */
  immutable: boolean;
  /**
   * Lets this site's own pages frame the PDF (the review page's viewer). Every other page keeps
   * the app's default of no framing at all.
   */
  frameableBySelf?: boolean;
}

/** Answers with a PDF: its content type, file name, hash as the ETag and the cache rule. */
export function sendPdf(res: Response, file: PdfFile, options: PdfResponseOptions): void {
  res.set({
    'content-type': 'application/pdf',
    'content-disposition': `${options.disposition}; filename="${file.fileName}"`,
    etag: `"${file.sha256}"`,
    'cache-control': options.immutable ? 'private, max-age=31536000, immutable' : 'private, no-cache',
    ...(options.frameableBySelf
      ? { 'content-security-policy': "frame-ancestors 'self'", 'x-frame-options': 'SAMEORIGIN' }
      : {}),
  });
  res.send(file.pdf);
}
