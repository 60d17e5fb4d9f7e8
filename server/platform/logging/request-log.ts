import { randomUUID } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { logger } from './logger.ts';

declare module 'express-serve-static-core' {
  interface Request {
    /** This request's id, in every log line about it and in the `X-Request-Id` response header. */
    id?: string;
  }
}

const REQUEST_ID = /^[A-Za-z0-9._-]{8,64}$/;

/**
 * The route pattern a request matched (`/reports/:id`), or its path when no route matched, so
 * tokens and record numbers typed into an address are not copied into the log.
 */
function routeOf(req: Request): string {
  const pattern = req.route?.path;
  return typeof pattern === 'string' ? `${req.baseUrl}${pattern}` : 'unmatched';
}

/**
 * One log line per request, written when the response is finished: request id, method, route,
 * status, duration, and who asked (user id and organisation, once signed in).
 */
export const requestLog: RequestHandler = (req, res, next) => {
  const offered = req.get('x-request-id');
  req.id = offered && REQUEST_ID.test(offered) ? offered : randomUUID();
  res.setHeader('X-Request-Id', req.id);
  const started = process.hrtime.bigint();
  res.on('finish', () => {
    const user = req.user as { id?: number; organisationId?: number } | undefined;
    logger.info(
      {
        reqId: req.id,
        method: req.method,
        route: routeOf(req),
        status: res.statusCode,
        ms: Number(process.hrtime.bigint() - started) / 1e6,
        userId: user?.id ?? null,
        organisationId: user?.organisationId ?? null,
      },
      'request',
    );
  });
  next();
};
