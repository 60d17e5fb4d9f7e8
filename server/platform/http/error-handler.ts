import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';
import { logger } from '../logging/logger.ts';
import { renderPage } from '../web/render-page.ts';
import { DATABASE_UNREACHABLE_MESSAGE, isDatabaseUnreachable } from './database-unreachable.ts';
import { HttpError } from './http-error.ts';

const HEADINGS: Record<number, string> = {
  400: 'The request could not be read',
  401: 'Sign in first',
  403: 'Not allowed',
  404: 'Not found',
  413: 'Too large',
  415: 'Unsupported content type',
  429: 'Too many requests',
  500: 'Something went wrong',
  503: 'The database is not reachable',
};

/** Seconds a client is told to wait before trying again while the database is away. */
const RETRY_AFTER_SECONDS = 60;

/** The catch-all for paths no route matched. */
export const notFound: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, `There is nothing at ${req.path}.`));
};

/** body-parser and multer errors carry a status and a type; translate them to safe messages. */
function fromFrameworkError(error: unknown): HttpError | null {
  if (error instanceof HttpError) return error;
  if (isDatabaseUnreachable(error)) return new HttpError(503, DATABASE_UNREACHABLE_MESSAGE);
  if (error instanceof ZodError) {
    return new HttpError(
      400,
      'Some fields are not valid.',
      error.issues.map((issue) => ({ field: issue.path.join('.'), message: issue.message })),
    );
  }
  const typed = error as {
    status?: number;
    statusCode?: number;
    type?: string;
    code?: string;
    name?: string;
    field?: string;
  };
  if (typed.name === 'MulterError') {
    if (typed.code === 'LIMIT_FILE_SIZE')
      return new HttpError(413, 'The file is larger than this upload accepts.');
    return new HttpError(
      400,
      `The upload could not be read (${typed.code ?? 'multipart error'}${typed.field ? `, field "${typed.field}"` : ''}).`,
    );
  }
  const status = typed.status ?? typed.statusCode;
  if (typed.type === 'entity.parse.failed') return new HttpError(400, 'The request body is not valid JSON.');
  if (typed.type === 'entity.too.large')
    return new HttpError(413, 'The request body is larger than this endpoint accepts.');
  if (typed.type === 'encoding.unsupported' || typed.type === 'charset.unsupported') {
    return new HttpError(415, 'The request body uses an encoding this endpoint does not accept.');
  }
  if (status && status >= 400 && status < 500)
    return new HttpError(status, HEADINGS[status] ?? 'The request was refused.');
  return null;
}

/** The one final handler: JSON for /api and /healthz, an HTML page otherwise; internals never leak. */
export const errorHandler: ErrorRequestHandler = (error, req, res, _next) => {
  const known = fromFrameworkError(error);
  const status = known?.status ?? 500;
  const message =
    known?.message ??
    'An unexpected error stopped this request. It has been logged; nothing was saved half-way.';
  if (!known)
    logger.error(
      { err: error, reqId: req.id, method: req.method, route: req.route?.path ?? null },
      'request failed',
    );
  else if (status === 503)
    // One line, no stack: while the database is away every request would otherwise log one.
    logger.warn(
      { reqId: req.id, method: req.method, code: (error as { code?: string }).code ?? null },
      'database not reachable',
    );
  if (res.headersSent) return;
  if (status === 503) res.set('Retry-After', String(RETRY_AFTER_SECONDS));
  if (req.originalUrl.startsWith('/api/') || req.originalUrl.startsWith('/healthz') || !req.accepts('html')) {
    res
      .status(status)
      .json({ error: { status, message, ...(known?.details ? { details: known.details } : {}) } });
    return;
  }
  renderPage(
    req,
    res,
    'error',
    { title: HEADINGS[status] ?? 'Error', status, heading: HEADINGS[status] ?? 'Error', message },
    status,
  );
};
