import { and, eq, gt, isNull, sql } from 'drizzle-orm';
import type { InviteInput } from '../../../shared/api/user-admin.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Transaction } from '../../platform/db/client.ts';
import { invitations, memberships, organisations, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail, type MailDelivery } from '../../platform/mail/mail-transport.ts';
import { invitationMail } from '../../platform/mail/messages.ts';
import { type AuditContext, ORGANISATION_ADMIN_LOCK } from '../settings/index.ts';
import { newLinkToken } from './link-tokens.ts';

/**
 * Invitations: an administrator invites a person by e-mail with the roles they will hold; the
 * message carries a link with a one-time token (`link-tokens.ts`: 32 random bytes, only its
 * SHA-256 stored, so the table cannot be used to forge a link). The link works once and for
 * `INVITATION_HOURS`; a database trigger refuses any change to an invitation once used. Inviting
 * the same address again expires the earlier link, so only the newest works. Listing and
 * withdrawing open invitations is `pending-invitations.ts`; opening and accepting the link is
 * `accept-invitation.ts`.
 */

/** How long an invitation link works. */
export const INVITATION_HOURS = 72;

/** Expires the open invitations of one address in the organisation (a new one replaces them). */
async function expireOpenInvitations(tx: Transaction, organisationId: number, email: string) {
  return tx
    .update(invitations)
    .set({ expiresAt: sql`now()` })
    .where(
      and(
        eq(invitations.organisationId, organisationId),
        eq(invitations.email, email),
        isNull(invitations.usedAt),
        gt(invitations.expiresAt, sql`now()`),
      ),
    )
    .returning({ id: invitations.id });
}

/**
 * Refuses an address that is already a member of this organisation (409, field `email`; the
 * administrator sees their members anyway). Whether the address has an account elsewhere — or
 * a deactivated one — is never said: an invitation must not tell an administrator which
 * addresses are known to Rateledger. Such a person joins with their account when they accept.
 */
async function checkInvitable(tx: Transaction, organisationId: number, email: string): Promise<void> {
  const [member] = await tx
    .select({ id: memberships.id })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(users.email, email), eq(memberships.organisationId, organisationId)))
    .limit(1);
  if (member)
    throw new HttpError(
      409,
      `${email} is already a member of this organisation: change their roles on their page.`,
      [
        {
          field: 'email',
          message: `${email} is already a member: change their roles on their page instead.`,
        },
      ],
    );
}

/**
 * Records the invitation and sends the message once it has committed. HttpError 409 (with the
 * field `email`) when the address is already a member of the organisation.
 */
export async function inviteMember(
  db: Database,
  actor: SessionUser,
  input: InviteInput,
  context: AuditContext,
): Promise<{
  invitationId: number;
  expiresAt: Date;
  delivery: MailDelivery | null;
}> {
  const { token, digest } = newLinkToken();
  const { result, deliveries } = await commitThenMail(db, async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${ORGANISATION_ADMIN_LOCK}, ${actor.organisationId})`);
    await checkInvitable(tx, actor.organisationId, input.email);
    const replaced = await expireOpenInvitations(tx, actor.organisationId, input.email);
    const [organisation] = await tx
      .select()
      .from(organisations)
      .where(eq(organisations.id, actor.organisationId));
    const [invitation] = await tx
      .insert(invitations)
      .values({
        organisationId: actor.organisationId,
        email: input.email,
        fullName: input.fullName,
        roles: input.roles,
        tokenSha256: digest,
        expiresAt: sql`now() + make_interval(hours => ${INVITATION_HOURS})` as unknown as Date,
        invitedBy: actor.id,
      })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'user.invited',
      recordType: 'invitation',
      recordId: invitation!.id,
      after: {
        email: input.email,
        fullName: input.fullName,
        roles: input.roles,
        signingRoleConfirmed: input.roles.includes('reviewer') && input.confirmSigningRole,
        expiresAt: invitation!.expiresAt,
        replacesInvitations: replaced.map((row) => row.id),
      },
      context,
    });
    const content = invitationMail({
      organisationName: organisation!.name,
      inviterName: actor.fullName,
      recipientName: input.fullName,
      actionPath: `/invitations/${token}`,
      expiresAt: invitation!.expiresAt,
      timeZone: organisation!.timeZone,
    });
    return {
      result: { invitationId: invitation!.id, expiresAt: invitation!.expiresAt },
      mail: [
        {
          organisationId: actor.organisationId,
          kind: 'invitation',
          to: { name: input.fullName, address: input.email },
          ...content,
          record: { type: 'invitation', id: invitation!.id },
        },
      ],
    };
  });
  return { ...result, delivery: deliveries[0] ?? null };
}
