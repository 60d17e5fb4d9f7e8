import { eq, sql } from 'drizzle-orm';
import type { MemberRole } from '../../../shared/api/user-admin.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { hashPassword } from '../../platform/auth/passwords.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Transaction } from '../../platform/db/client.ts';
import { invitations, memberships, organisations, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import {
  type AuditContext,
  type PasswordPolicy,
  passwordPolicyOf,
  passwordProblems,
} from '../settings/index.ts';
import { closedLinkMessage, type LinkState, tokenDigest } from './link-tokens.ts';
import { PasswordPolicyError } from './password-policy-error.ts';

/**
 * Opening and accepting an invitation link (`invite-member.ts` sends it). Accepting creates the
 * account with the password the invitee chooses (checked against the organisation's policy) and
 * the invited roles. Decision for an address that already has an account (in another
 * organisation): no second account is created, and the link does not set a password — the
 * person signs in with their existing account and joins; their password stays theirs (an
 * invitation link must never let its holder take over an existing account).
 */

export interface InvitationView {
  state: LinkState;
  id: number;
  email: string;
  fullName: string;
  roles: MemberRole[];
  expiresAt: Date;
  organisationId: number;
  organisationName: string;
  /** The address already has an account: the person signs in to join. */
  existingAccount: boolean;
  policy: PasswordPolicy;
}

type Invitation = typeof invitations.$inferSelect;

async function invitationByToken(executor: Database | Transaction, token: string, lock: boolean) {
  const query = executor
    .select({
      invitation: invitations,
      organisationName: organisations.name,
      expired: sql<boolean>`${invitations.expiresAt} <= now()`,
    })
    .from(invitations)
    .innerJoin(organisations, eq(organisations.id, invitations.organisationId))
    .where(eq(invitations.tokenSha256, tokenDigest(token)));
  const [row] = lock ? await query.for('update', { of: invitations }) : await query;
  return row;
}

/** What the invitation page shows; HttpError 404 when no invitation has this token. */
export async function openInvitation(db: Database, token: string): Promise<InvitationView> {
  const row = await invitationByToken(db, token, false);
  if (!row)
    throw new HttpError(
      404,
      'This invitation link is not valid. Check that the whole link was copied from the message.',
    );
  const { invitation } = row;
  const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, invitation.email));
  return {
    state: invitation.usedAt ? 'used' : row.expired ? 'expired' : 'open',
    id: invitation.id,
    email: invitation.email,
    fullName: invitation.fullName,
    roles: invitation.roles as MemberRole[],
    expiresAt: invitation.expiresAt,
    organisationId: invitation.organisationId,
    organisationName: row.organisationName,
    existingAccount: Boolean(existing),
    policy: await passwordPolicyOf(db, invitation.organisationId),
  };
}

/**
 * The account the invitation is accepted into: the existing one, which must be the one signed in
 * (403 otherwise; the link never sets its password), or a new one with `password` (policy checked).
 */
async function acceptingAccount(
  tx: Transaction,
  invitation: Invitation,
  input: { password?: string; signedIn?: SessionUser | undefined },
): Promise<{ userId: number; existing: typeof users.$inferSelect | undefined }> {
  const [existing] = await tx.select().from(users).where(eq(users.email, invitation.email)).for('update');
  if (existing) {
    if (input.signedIn?.id !== existing.id)
      throw new HttpError(403, `Sign in as ${invitation.email} first, then open the invitation link again.`);
    if (!existing.active) throw new HttpError(403, 'This account is deactivated.');
    return { userId: existing.id, existing };
  }
  const policy = await passwordPolicyOf(tx, invitation.organisationId);
  const problems = passwordProblems(input.password ?? '', policy, { email: invitation.email });
  if (problems.length > 0) throw new PasswordPolicyError(problems);
  const passwordHash = await hashPassword(input.password!);
  const [created] = await tx
    .insert(users)
    .values({ email: invitation.email, fullName: invitation.fullName, passwordHash })
    .onConflictDoNothing({ target: users.email })
    .returning({ id: users.id });
  // Another invitation to the same address was accepted at this very moment.
  if (!created)
    throw new HttpError(409, 'An account for this address was created meanwhile. Open the link again.');
  return { userId: created.id, existing: undefined };
}

/**
 * Accepts an open invitation. For a new address: creates the account with `password` (policy
 * checked) and the invited roles. For an address with an account: `signedIn` must be that
 * account, which joins the organisation with the invited roles. Throws HttpError 410 for a used
 * or expired link, PasswordPolicyError for a password the policy refuses.
 */
export async function acceptInvitation(
  db: Database,
  token: string,
  input: { password?: string; signedIn?: SessionUser | undefined },
  context: AuditContext,
): Promise<{
  userId: number;
  email: string;
  organisationName: string;
  roles: MemberRole[];
  joinedExisting: boolean;
}> {
  return db.transaction(async (tx) => {
    const row = await invitationByToken(tx, token, true);
    if (!row) throw new HttpError(404, 'This invitation link is not valid.');
    const { invitation } = row;
    if (invitation.usedAt) throw new HttpError(410, closedLinkMessage('used', 'invitation'));
    if (row.expired) throw new HttpError(410, closedLinkMessage('expired', 'invitation'));
    const roles = invitation.roles as MemberRole[];
    const { userId, existing } = await acceptingAccount(tx, invitation, input);
    for (const role of roles)
      await tx
        .insert(memberships)
        .values({ userId, organisationId: invitation.organisationId, role })
        .onConflictDoNothing();
    const [used] = await tx
      .update(invitations)
      .set({ usedAt: sql`now()` })
      .where(eq(invitations.id, invitation.id))
      .returning({ usedAt: invitations.usedAt });
    const audit = {
      organisationId: invitation.organisationId,
      actorUserId: userId,
      actorLabel: invitation.email,
      context,
    };
    await appendAuditEvent(tx, {
      ...audit,
      action: 'invitation.accepted',
      recordType: 'invitation',
      recordId: invitation.id,
      before: { usedAt: null },
      after: { usedAt: used?.usedAt ?? null, userId, joinedExistingAccount: Boolean(existing) },
    });
    await appendAuditEvent(tx, {
      ...audit,
      action: existing ? 'user.joined-organisation' : 'user.created',
      recordType: 'user',
      recordId: userId,
      before: existing ? { roles: [] } : null,
      after: {
        email: invitation.email,
        fullName: existing?.fullName ?? invitation.fullName,
        roles,
        invitationId: invitation.id,
      },
    });
    return {
      userId,
      email: invitation.email,
      organisationName: row.organisationName,
      roles,
      joinedExisting: Boolean(existing),
    };
  });
}
