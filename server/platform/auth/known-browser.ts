import type { Request, Response } from 'express';
import { purposeKey, randomToken, readCookie, sameText, tag } from './keyed-tokens.ts';

/**
 * The known-browser cookie ("device cookie", OWASP: Slow Down Online Guessing Attacks with Device
 * Cookies): after a successful sign-in the browser keeps a signed `userId.nonce.tag` for 180 days.
 * A sign-in attempt that presents a valid one for the account is throttled on its own counter
 * instead of its address, and the account-wide lock (guessing spread over many addresses) does
 * not apply to it. A stranger has no such cookie, so a lock they cause never reaches the owner's
 * own browser. Nothing is stored on the server: the counters are keyed by the nonce.
 */

const LIFETIME_MS = 180 * 24 * 60 * 60_000;

export interface KnownBrowser {
  userId: number;
  nonce: string;
}

export interface KnownBrowserCookie {
  /** The valid cookie of the request, or null. */
  read(req: Request): KnownBrowser | null;
  /** Sets (or renews) the cookie for `userId`, keeping the nonce when the browser already had one. */
  issue(res: Response, userId: number, current: KnownBrowser | null): void;
}

export function knownBrowserCookie(settings: { secret: string; secure: boolean }): KnownBrowserCookie {
  const key = purposeKey(settings.secret, 'known-browser');
  const name = settings.secure ? '__Host-rateledger.browser' : 'rateledger.browser';
  return {
    read(req) {
      const value = readCookie(req, name);
      const match = value ? /^(\d{1,10})\.([A-Za-z0-9_-]{22})\.([A-Za-z0-9_-]{43})$/.exec(value) : null;
      if (!match) return null;
      const [, userId, nonce, signature] = match as unknown as [string, string, string, string];
      return sameText(tag(key, `${userId}.${nonce}`), signature) ? { userId: Number(userId), nonce } : null;
    },
    issue(res, userId, current) {
      const nonce = current?.userId === userId ? current.nonce : randomToken(16);
      res.cookie(name, `${userId}.${nonce}.${tag(key, `${userId}.${nonce}`)}`, {
        httpOnly: true,
        sameSite: 'lax',
        secure: settings.secure,
        path: '/',
        maxAge: LIFETIME_MS,
      });
    },
  };
}
