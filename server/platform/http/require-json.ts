import type { RequestHandler } from 'express';
import { HttpError } from './http-error.ts';

/** API writes must send JSON (uploads declare their own multipart parser on their route). */
export const requireJsonBody: RequestHandler = (req, _res, next) => {
  const hasBody = Number(req.get('content-length') ?? 0) > 0 || req.get('transfer-encoding') !== undefined;
  if (
    req.path.startsWith('/api/') &&
    ['POST', 'PUT', 'PATCH', 'DELETE'].includes(req.method) &&
    hasBody &&
    !req.is('application/json') &&
    !req.is('multipart/form-data')
  ) {
    return next(new HttpError(415, 'Send the request body as application/json.'));
  }
  next();
};
