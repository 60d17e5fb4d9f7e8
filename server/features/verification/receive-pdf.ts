import type { RequestHandler } from 'express';
import multer from 'multer';
import { VERIFY_UPLOAD_FIELD, VERIFY_UPLOAD_LIMIT_BYTES } from '../../../shared/api/review.ts';
import { HttpError } from '../../platform/http/http-error.ts';

export const LIMIT_MB = VERIFY_UPLOAD_LIMIT_BYTES / (1024 * 1024);

/** One file in memory, at most VERIFY_UPLOAD_LIMIT_BYTES; multer's errors become clear 4xx answers. */
export function receivePdf(): RequestHandler {
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
