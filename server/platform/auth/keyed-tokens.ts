import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request } from 'express';

/**
 * Small primitives for the stateless cookies of sign-in (the anonymous form token, the known-browser
 * cookie): a key per purpose derived from the session secret, an HMAC-SHA-256 tag, a comparison in
 * constant time, and reading one cookie from the request (express-session parses only its own).
 */

/** A key for one purpose, so a tag made for one cookie is never valid for another. */
export function purposeKey(secret: string, purpose: string): Buffer {
  return createHmac('sha256', secret).update(`rateledger:${purpose}`).digest();
}

/** base64url HMAC-SHA-256 of `value` under `key`. */
export function tag(key: Buffer, value: string): string {
  return createHmac('sha256', key).update(value).digest('base64url');
}

export function randomToken(bytes = 32): string {
  return randomBytes(bytes).toString('base64url');
}

export function sameText(a: string, b: string): boolean {
  const left = Buffer.from(a);
  const right = Buffer.from(b);
  return left.length === right.length && timingSafeEqual(left, right);
}

/** The value of one cookie of the request, or undefined. */
export function readCookie(req: Request, name: string): string | undefined {
  const header = req.headers.cookie;
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const separator = part.indexOf('=');
    if (separator < 0 || part.slice(0, separator).trim() !== name) continue;
    const raw = part.slice(separator + 1).trim();
    try {
      return decodeURIComponent(raw.startsWith('"') && raw.endsWith('"') ? raw.slice(1, -1) : raw);
    } catch {
      return undefined;
    }
  }
  return undefined;
}
