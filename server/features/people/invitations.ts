import { createHash, randomBytes } from 'node:crypto';
import { and, asc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { InviteInput, MemberRole } from '../../../shared/api/user-admin.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { hashPassword } from '../../platform/auth/passwords.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Transaction } from '../../platform/db/client.ts';
import { invitations, memberships, organisations, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail, type MailDelivery } from '../../platform/mail/mail-transport.ts';
import { invitationMail } from '../../platform/mail/messages.ts';
import {
  type AuditContext,
  ORGANISATION_ADMIN_LOCK,
  type PasswordPolicy,
  passwordPolicyOf,
  passwordProblems,
} from '../settings/index.ts';

/**
 * Invitations: an administrator invites a person by e-mail with the roles they will hold; the
 * message carries a link with a one-time token (32 random bytes; only its SHA-256 is stored, so
 * the table cannot be used to forge a link). The link works once and for `INVITATION_HOURS`; a
 * database trigger refuses any change to an invitation once used. Inviting the same address again
 * expires the earlier link, so only the newest works.
 *
 * Accepting creates the account with the password the invitee chooses (checked against the
 * organisation's policy) and the invited roles. Decision for an address that already has an
 * account (in another organisation): no second account is created, and the link does not set a
 * password — the person signs in with their existing account and joins; their password stays
 * theirs (an invitation link must never let its holder take over an existing account).
 */

export const INVITATION_HOURS = 72;

export type LinkState = 'open' | 'used' | 'expired';

/** A fresh one-time token and the digest stored in its place. */
export function newLinkToken(): { token: string; digest: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, digest: tokenDigest(token) };
}

export function tokenDigest(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

export interface PendingInvitation {
  id: number;
  email: string;
  fullName: string;
  roles: MemberRole[];
  expiresAt: Date;
  createdAt: Date;
  invitedBy: string;
}

/** Invitations of the organisation not used and not expired, oldest first. */
export async function listPendingInvitations(
  db: Database,
  organisationId: number,
): Promise<PendingInvitation[]> {
  const rows = await db
    .select({
      id: invitations.id,
      email: invitations.email,
      fullName: invitations.fullName,
      roles: invitations.roles,
      expiresAt: invitations.expiresAt,
      createdAt: invitations.createdAt,
      invitedBy: users.fullName,
    })
    .from(invitations)
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(
      and(
        eq(invitations.organisationId, organisationId),
        isNull(invitations.usedAt),
        gt(invitations.expiresAt, sql`now()`),
      ),
    )
    .orderBy(asc(invitations.createdAt));
  return rows.map((row) => ({ ...row, roles: row.roles as MemberRole[] }));
}

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
  existingAccount: boolean;
  delivery: MailDelivery | null;
}> {
  const { token, digest } = newLinkToken();
  const { result, deliveries } = await commitThenMail(db, async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${ORGANISATION_ADMIN_LOCK}, ${actor.organisationId})`);
    const [existing] = await tx
      .select({ id: users.id, active: users.active })
      .from(users)
      .where(eq(users.email, input.email));
    if (existing) {
      const [member] = await tx
        .select({ id: memberships.id })
        .from(memberships)
        .where(and(eq(memberships.userId, existing.id), eq(memberships.organisationId, actor.organisationId)))
        .limit(1);
      if (member)
        throw new HttpError(
          409,
          `${input.email} is already a member of this organisation: change their roles on their page.`,
          [
            {
              field: 'email',
              message: `${input.email} is already a member: change their roles on their page instead.`,
            },
          ],
        );
      if (!existing.active)
        throw new HttpError(409, `The account of ${input.email} is deactivated.`, [
          { field: 'email', message: `The account of ${input.email} is deactivated; it cannot be invited.` },
        ]);
    }
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
        expiresAt: invitation!.expiresAt,
        existingAccount: Boolean(existing),
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
      result: {
        invitationId: invitation!.id,
        expiresAt: invitation!.expiresAt,
        existingAccount: Boolean(existing),
      },
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

/** Withdraws an open invitation: its link stops working at once. */
export async function revokeInvitation(
  db: Database,
  actor: SessionUser,
  invitationId: number,
  context: AuditContext,
): Promise<void> {
  await db.transaction(async (tx) => {
    const [invitation] = await tx
      .select()
      .from(invitations)
      .where(and(eq(invitations.id, invitationId), eq(invitations.organisationId, actor.organisationId)))
      .for('update');
    if (!invitation) throw new HttpError(404, `There is no invitation ${invitationId} in your organisation.`);
    const [open] = await tx
      .update(invitations)
      .set({ expiresAt: sql`now()` })
      .where(
        and(
          eq(invitations.id, invitationId),
          isNull(invitations.usedAt),
          gt(invitations.expiresAt, sql`now()`),
        ),
      )
      .returning();
    if (!open) throw new HttpError(409, 'This invitation was already used or has expired.');
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'invitation.revoked',
      recordType: 'invitation',
      recordId: invitationId,
      before: { expiresAt: invitation.expiresAt },
      after: { expiresAt: open.expiresAt },
      context: { ...context, email: invitation.email },
    });
  });
}

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

export class PasswordPolicyError extends HttpError {
  constructor(readonly problems: string[]) {
    super(
      400,
      'The password does not meet the policy.',
      problems.map((message) => ({ field: 'password', message })),
    );
  }
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
    const [existing] = await tx.select().from(users).where(eq(users.email, invitation.email)).for('update');
    let userId: number;
    if (existing) {
      if (input.signedIn?.id !== existing.id)
        throw new HttpError(
          403,
          `Sign in as ${invitation.email} first, then open the invitation link again.`,
        );
      if (!existing.active) throw new HttpError(403, 'This account is deactivated.');
      userId = existing.id;
    } else {
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
      userId = created!.id;
    }
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
