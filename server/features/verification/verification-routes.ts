import { Router } from 'express';
import { VERIFY_UPLOAD_FIELD, verifyReportQuerySchema } from '../../../shared/api/review.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { signedIn } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { LIMIT_MB, receivePdf } from './receive-pdf.ts';
import { signedRecordsOfReport, verifyPdf } from './verification.ts';

/**
 * The verification page: any signed-in member uploads a PDF (through the island, which sends the
 * CSRF header with the multipart body) or types a report number, and sees whether the file is a
 * stored signed record, who signed it, when and with what meaning, and whether its seal verifies.
 */
export function verificationRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/verify', signedIn(), async (req, res) => {
    const parsed = verifyReportQuerySchema.safeParse(req.query);
    const typed = typeof req.query.report === 'string' ? req.query.report.slice(0, 64) : '';
    if (!parsed.success) {
      return renderPage(
        req,
        res,
        'verify',
        { title: 'Verify a PDF', typed, lookupError: parsed.error.issues[0]?.message, limitMb: LIMIT_MB },
        400,
      );
    }
    const number = parsed.data.report;
    const lookup = number ? await signedRecordsOfReport(services.db, req.user!, number) : null;
    renderPage(req, res, 'verify', {
      title: 'Verify a PDF',
      typed,
      searched: Boolean(number),
      lookup,
      limitMb: LIMIT_MB,
    });
  });

  router.post('/api/verify', signedIn(), receivePdf(), async (req, res) => {
    if (!req.file || req.file.size === 0)
      throw new HttpError(
        400,
        `Choose a PDF file to check (form field "${VERIFY_UPLOAD_FIELD}"); the upload was empty.`,
      );
    // Browsers send the name as UTF-8 bytes that busboy reads as Latin-1.
    const fileName = Buffer.from(req.file.originalname, 'latin1').toString('utf8').slice(0, 200);
    res
      .set('cache-control', 'no-store')
      .json(await verifyPdf(services.db, req.user!, { bytes: req.file.buffer, fileName }));
  });

  return router;
}
