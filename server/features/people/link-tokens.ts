import { newOneTimeLink, oneTimeLinkDigest } from '../../platform/auth/one-time-link.ts';

/**
 * The one-time links Rateledger mails (invitations, password resets, account unlocks): the one
 * scheme of `platform/auth/one-time-link.ts` (32 random bytes, of which only the SHA-256 is
 * stored, so the table cannot be used to forge a link).
 */

export type LinkState = 'open' | 'used' | 'expired';

/** A fresh one-time token and the digest stored in its place. */
export const newLinkToken = newOneTimeLink;

export const tokenDigest = oneTimeLinkDigest;

/** The sentence shown for a link that no longer works. */
export function closedLinkMessage(state: Exclude<LinkState, 'open'>, what: 'invitation' | 'reset'): string {
  const ask =
    what === 'invitation'
      ? 'Ask your administrator to send you a new invitation.'
      : 'Ask your administrator to send you a new password reset link.';
  return state === 'used'
    ? `This ${what === 'invitation' ? 'invitation' : 'password reset'} link has already been used: each link works only once. ${what === 'invitation' ? 'If you set your password with it, sign in.' : 'If you chose your new password with it, sign in.'} Otherwise: ${ask}`
    : `This ${what === 'invitation' ? 'invitation' : 'password reset'} link has expired. ${ask}`;
}
