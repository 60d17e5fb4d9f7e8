import { createHash } from 'node:crypto';
import { randomToken } from './keyed-tokens.ts';

/**
 * A one-time link token: 32 random bytes, of which only the SHA-256 is stored. The one scheme of
 * every mailed link: the people feature's invitation and password-reset links re-export it
 * (`features/people/link-tokens.ts`), so an unlock link issued here opens the ordinary reset page.
 */
export function newOneTimeLink(): { token: string; digest: string } {
  const token = randomToken(32);
  return { token, digest: oneTimeLinkDigest(token) };
}

export function oneTimeLinkDigest(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}
