import { type RequestHandler, Router } from 'express';
import multer from 'multer';
import {
  VERIFY_UPLOAD_FIELD,
  VERIFY_UPLOAD_LIMIT_BYTES,
  verifyReportQuerySchema,
} from '../../../shared/api/review.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { signedIn } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { signedRecordsOfReport, verifyPdf } from './verification.ts';

const LIMIT_MB = VERIFY_UPLOAD_LIMIT_BYTES / (1024 * 1024);

/** One file in memory, at most VERIFY_UPLOAD_LIMIT_BYTES; multer's errors become clear 4xx answers. */
function receivePdf(): RequestHandler {
  const parse = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: VERIFY_UPLOAD_LIMIT_BYTES, files: 1, fields: 5, parts: 6 },
  }).single(VERIFY_UPLOAD_FIELD);
  return (req, res, next) => {
    parse(req, res, (error: unknown) => {
      if (!error) return next();
      if (error instanceof multer.MulterError && error.code === 'LIMIT_FILE_SIZE')
        return next(
          new HttpError(
            413,
            `The file is larger than ${LIMIT_MB} MB; a Rateledger report is far smaller. Check that you chose the right file.`,
          ),
        );
      if (error instanceof multer.MulterError)
        return next(
          new HttpError(
            400,
            `The upload could not be read: ${error.message}. Send one PDF in the field "${VERIFY_UPLOAD_FIELD}".`,
          ),
        );
      next(
        new HttpError(
          400,
          'The upload could not be read: the form data is incomplete or malformed. Try again.',
        ),
      );
    });
  };
}

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
