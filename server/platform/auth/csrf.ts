import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { HttpError } from '../http/http-error.ts';

/**
 * Synchroniser-token CSRF protection (OWASP CSRF Prevention Cheat Sheet): a random token kept in
 * the server-side session, echoed by every state-changing request in the `x-csrf-token` header
 * (islands) or the `_csrf` form field (server-rendered forms).
 */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
export const CSRF_HEADER = 'x-csrf-token';
export const CSRF_FIELD = '_csrf';

declare module 'express-session' {
  interface SessionData {
    csrfToken?: string;
  }
}

/** The session's token, created on first use. */
export function csrfToken(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = randomBytes(32).toString('base64url');
  return req.session.csrfToken;
}

export const csrfProtection: RequestHandler = (req, _res, next) => {
  if (SAFE_METHODS.has(req.method)) return next();
  const expected = req.session?.csrfToken;
  const body = req.body as Record<string, unknown> | undefined;
  const sent =
    req.get(CSRF_HEADER) ?? (typeof body?.[CSRF_FIELD] === 'string' ? body[CSRF_FIELD] : undefined);
  if (!expected || typeof sent !== 'string' || !sameToken(expected, sent)) {
    return next(
      new HttpError(
        403,
        'The form has expired or did not come from Rateledger. Reload the page and try again.',
      ),
    );
  }
  next();
};

function sameToken(a: string, b: string): boolean {
  const left = Buffer.from(a);
  const right = Buffer.from(b);
  return left.length === right.length && timingSafeEqual(left, right);
}
