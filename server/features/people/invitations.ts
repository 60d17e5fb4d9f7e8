/**
 * Invitations: an administrator invites a person by e-mail with the roles they will hold; the
 * message carries a link with a one-time token (`link-tokens.ts`: 32 random bytes, only its
 * SHA-256 stored, so the table cannot be used to forge a link). The link works once and for
 * `INVITATION_HOURS`; a database trigger refuses any change to an invitation once used. Inviting
 * the same address again expires the earlier link, so only the newest works.
 *
 * Accepting creates the account with the password the invitee chooses (checked against the
 * organisation's policy) and the invited roles. Decision for an address that already has an
 * account (in another organisation): no second account is created, and the link does not set a
 * password — the person signs in with their existing account and joins; their password stays
 * theirs (an invitation link must never let its holder take over an existing account).
 *
 * The steps live in their own modules: `invite-member.ts` (invite), `pending-invitations.ts`
 * (list, withdraw), `accept-invitation.ts` (open the link, accept). This module gathers them.
 */

export { acceptInvitation, type InvitationView, openInvitation } from './accept-invitation.ts';
export { INVITATION_HOURS, inviteMember } from './invite-member.ts';
export { closedLinkMessage, type LinkState, newLinkToken, tokenDigest } from './link-tokens.ts';
export { PasswordPolicyError } from './password-policy-error.ts';
export { listPendingInvitations, type PendingInvitation, revokeInvitation } from './pending-invitations.ts';
