import { createHash } from 'node:crypto';
import { randomToken } from './keyed-tokens.ts';

/**
 * A one-time link token: 32 random bytes, of which only the SHA-256 is stored. The same scheme as
 * the invitation and password-reset links of the people feature (`link-tokens.ts`, which should
 * come to re-export these), so an unlock link issued here opens the ordinary reset page.
 */
export function newOneTimeLink(): { token: string; digest: string } {
  const token = randomToken(32);
  return { token, digest: oneTimeLinkDigest(token) };
}

export function oneTimeLinkDigest(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}
