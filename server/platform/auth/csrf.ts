import type { Request, RequestHandler } from 'express';
import { HttpError } from '../http/http-error.ts';
import { purposeKey, randomToken, readCookie, sameText, tag } from './keyed-tokens.ts';

/**
 * CSRF protection (OWASP CSRF Prevention Cheat Sheet) in two forms, so that an anonymous visitor
 * never needs a server-side session (a page view must not write a session row):
 * - signed in: a synchroniser token kept in the session;
 * - anonymous (sign-in, invitation and password-reset forms): a signed double-submit cookie. The
 *   browser holds a random nonce in an HttpOnly cookie; the form carries HMAC(key, nonce) with a
 *   key derived from the session secret. A forger can neither read the page's token nor compute
 *   one for the victim's nonce; over HTTPS the cookie is `__Host-`-prefixed, so no sibling domain
 *   can plant a nonce of its own.
 * Every state-changing request echoes its token in the `x-csrf-token` header (islands) or the
 * `_csrf` form field (server-rendered forms). A signed-in request must carry the session's token.
 */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
export const CSRF_HEADER = 'x-csrf-token';
export const CSRF_FIELD = '_csrf';
const NONCE_PATTERN = /^[A-Za-z0-9_-]{43}$/;

declare module 'express-session' {
  interface SessionData {
    csrfToken?: string;
  }
}

declare global {
  namespace Express {
    interface Request {
      /** The token the page being rendered embeds (session or anonymous form token). */
      pageCsrfToken?: () => string;
    }
  }
}

export interface CsrfSettings {
  secret: string;
  /** Served over HTTPS: the anonymous cookie is Secure and `__Host-` prefixed. */
  secure: boolean;
}

/** The name of the anonymous form cookie. */
export function anonymousFormCookie(secure: boolean): string {
  return secure ? '__Host-rateledger.form' : 'rateledger.form';
}

/** The session's token, created on first use (only for a session that is stored anyway). */
export function csrfToken(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = randomToken();
  return req.session.csrfToken;
}

const usesSession = (req: Request) => Boolean(req.user) || Boolean(req.session?.csrfToken);

/**
 * The two CSRF middlewares: `tokens` (mounted right after the session, so that even an early
 * error page gets its token) gives every request `req.pageCsrfToken`; `protect` (after the body
 * parsers) refuses a state-changing request without a valid token.
 */
export function createCsrf(settings: CsrfSettings): { tokens: RequestHandler; protect: RequestHandler } {
  const key = purposeKey(settings.secret, 'anonymous-form');
  const cookieName = anonymousFormCookie(settings.secure);
  const nonceOf = (req: Request) => {
    const nonce = readCookie(req, cookieName);
    return nonce && NONCE_PATTERN.test(nonce) ? nonce : undefined;
  };

  const tokens: RequestHandler = (req, res, next) => {
    let anonymousToken: string | undefined;
    req.pageCsrfToken = () => {
      if (usesSession(req)) return csrfToken(req);
      if (!anonymousToken) {
        let nonce = nonceOf(req);
        if (!nonce) {
          nonce = randomToken();
          res.cookie(cookieName, nonce, {
            httpOnly: true,
            sameSite: 'lax',
            secure: settings.secure,
            path: '/',
          });
        }
        anonymousToken = tag(key, nonce);
      }
      return anonymousToken;
    };
    next();
  };

  const protect: RequestHandler = (req, _res, next) => {
    if (SAFE_METHODS.has(req.method)) return next();
    const body = req.body as Record<string, unknown> | undefined;
    const sent =
      req.get(CSRF_HEADER) ?? (typeof body?.[CSRF_FIELD] === 'string' ? body[CSRF_FIELD] : undefined);
    const sessionToken = req.session?.csrfToken;
    // A signed-in request must carry its session's token; the anonymous one is for anonymous forms.
    const nonce = req.user ? undefined : nonceOf(req);
    const valid =
      typeof sent === 'string' &&
      ((sessionToken !== undefined && sameText(sessionToken, sent)) ||
        (nonce !== undefined && sameText(tag(key, nonce), sent)));
    if (!valid) {
      return next(
        new HttpError(
          403,
          'The form has expired or did not come from Rateledger. Reload the page and try again.',
        ),
      );
    }
    next();
  };

  return { tokens, protect };
}
