import { and, eq, gt, isNull, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { hashPassword, verifyPassword } from '../../platform/auth/passwords.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor, Transaction } from '../../platform/db/client.ts';
import {
  memberships,
  organisations,
  passwordResets,
  sessions,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { commitThenMail, type MailDelivery } from '../../platform/mail/mail-transport.ts';
import { passwordResetMail } from '../../platform/mail/messages.ts';
import type { AuditContext } from '../settings/index.ts';
import {
  loadOrganisationSettings,
  type PasswordPolicy,
  passwordProblems,
  strictestPolicy,
} from '../settings/index.ts';
import { closedLinkMessage, type LinkState, newLinkToken, tokenDigest } from './link-tokens.ts';
import { PasswordPolicyError } from './password-policy-error.ts';
import { findMember } from './user-admin.ts';

/**
 * Password reset by e-mail link, started by an administrator for a member (21 CFR 11.300(c):
 * replacing a lost or compromised password "using suitable, rigorous controls"). The link carries
 * a one-time token (only its SHA-256 is stored), works once and for `RESET_LINK_HOURS`; a new link
 * expires the earlier ones. Choosing the new password checks it against the strictest policy of
 * the organisations the person belongs to, refuses the current password, lifts a lockout and ends
 * every open session of the account (whoever knew the old password is signed out). Each step is
 * an audit event; no password or token ever enters the trail.
 */

export const RESET_LINK_HOURS = 24;

async function policyForUser(executor: Executor, userId: number): Promise<PasswordPolicy> {
  const rows = await executor
    .selectDistinct({ organisationId: memberships.organisationId })
    .from(memberships)
    .where(eq(memberships.userId, userId));
  const policies: PasswordPolicy[] = [];
  for (const row of rows) {
    const settings = await loadOrganisationSettings(executor, row.organisationId);
    policies.push({
      minLength: settings.passwordMinLength,
      requiredClasses: settings.passwordRequireClasses,
    });
  }
  return strictestPolicy(policies);
}

/** Expires the member's open reset links (a new one replaces them). */
async function expireOpenResets(tx: Transaction, userId: number) {
  return tx
    .update(passwordResets)
    .set({ expiresAt: sql`now()` })
    .where(
      and(
        eq(passwordResets.userId, userId),
        isNull(passwordResets.usedAt),
        gt(passwordResets.expiresAt, sql`now()`),
      ),
    )
    .returning({ id: passwordResets.id });
}

/** Sends the member a reset link; returns when it expires and how the delivery went. */
export async function requestPasswordReset(
  db: Database,
  actor: SessionUser,
  userId: number,
  context: AuditContext,
): Promise<{ expiresAt: Date; delivery: MailDelivery | null }> {
  const { token, digest } = newLinkToken();
  const { result, deliveries } = await commitThenMail(db, async (tx) => {
    const member = await findMember(tx, actor.organisationId, userId);
    if (!member.active)
      throw new HttpError(
        409,
        `${member.fullName}'s account is deactivated; reactivate it before resetting the password.`,
      );
    const replaced = await expireOpenResets(tx, userId);
    const [reset] = await tx
      .insert(passwordResets)
      .values({
        userId,
        tokenSha256: digest,
        expiresAt: sql`now() + make_interval(hours => ${RESET_LINK_HOURS})` as unknown as Date,
        requestedBy: actor.id,
      })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'password.reset-requested',
      recordType: 'user',
      recordId: userId,
      after: {
        resetId: reset!.id,
        expiresAt: reset!.expiresAt,
        replacesResets: replaced.map((row) => row.id),
      },
      context: { ...context, subject: member.email },
    });
    const [organisation] = await tx
      .select()
      .from(organisations)
      .where(eq(organisations.id, actor.organisationId));
    const content = passwordResetMail({
      recipientName: member.fullName,
      actionPath: `/password-reset/${token}`,
      expiresAt: reset!.expiresAt,
      timeZone: organisation?.timeZone,
    });
    return {
      result: { expiresAt: reset!.expiresAt },
      mail: [
        {
          organisationId: actor.organisationId,
          kind: 'password-reset',
          to: { name: member.fullName, address: member.email },
          ...content,
          record: { type: 'user', id: userId },
        },
      ],
    };
  });
  return { ...result, delivery: deliveries[0] ?? null };
}

export interface PasswordResetView {
  state: LinkState;
  email: string;
  fullName: string;
  expiresAt: Date;
  policy: PasswordPolicy;
}

async function resetByToken(executor: Database | Transaction, token: string, lock: boolean) {
  const query = executor
    .select({
      reset: passwordResets,
      user: users,
      expired: sql<boolean>`${passwordResets.expiresAt} <= now()`,
    })
    .from(passwordResets)
    .innerJoin(users, eq(users.id, passwordResets.userId))
    .where(eq(passwordResets.tokenSha256, tokenDigest(token)));
  const [row] = lock ? await query.for('update', { of: [passwordResets, users] }) : await query;
  return row;
}

/** What the reset page shows; HttpError 404 when no reset has this token. */
export async function openPasswordReset(db: Database, token: string): Promise<PasswordResetView> {
  const row = await resetByToken(db, token, false);
  if (!row)
    throw new HttpError(
      404,
      'This password reset link is not valid. Check that the whole link was copied from the message.',
    );
  const state: LinkState = row.reset.usedAt ? 'used' : row.expired || !row.user.active ? 'expired' : 'open';
  return {
    state,
    email: row.user.email,
    fullName: row.user.fullName,
    expiresAt: row.reset.expiresAt,
    policy: await policyForUser(db, row.user.id),
  };
}

/** Ends every open session of the account: whoever knew the old password is signed out. */
async function endSessionsOf(tx: Transaction, userId: number) {
  return tx
    .delete(sessions)
    .where(sql`(${sessions.sess}::jsonb #>> '{passport,user,userId}') = ${String(userId)}`)
    .returning({ sid: sessions.sid });
}

/** The organisation a reset's audit event belongs to: the one whose administrator sent the link. */
async function resetOrganisation(
  tx: Transaction,
  userId: number,
  requestedBy: number | null,
): Promise<number | null> {
  const [membership] = await tx
    .select({ organisationId: memberships.organisationId })
    .from(memberships)
    .where(eq(memberships.userId, userId))
    .orderBy(
      sql`(${memberships.organisationId} in (select organisation_id from memberships where user_id = ${requestedBy ?? 0})) desc`,
      memberships.organisationId,
    )
    .limit(1);
  return membership?.organisationId ?? null;
}

/**
 * Sets the new password through an open link. Throws HttpError 410 for a used or expired link,
 * PasswordPolicyError for a password the policy refuses (or the current one).
 */
export async function completePasswordReset(
  db: Database,
  token: string,
  password: string,
  context: AuditContext,
): Promise<{ email: string; sessionsEnded: number }> {
  return db.transaction(async (tx) => {
    const row = await resetByToken(tx, token, true);
    if (!row) throw new HttpError(404, 'This password reset link is not valid.');
    const { reset, user } = row;
    if (reset.usedAt) throw new HttpError(410, closedLinkMessage('used', 'reset'));
    if (row.expired || !user.active) throw new HttpError(410, closedLinkMessage('expired', 'reset'));
    const problems = passwordProblems(password, await policyForUser(tx, user.id), { email: user.email });
    if (problems.length === 0 && (await verifyPassword(user.passwordHash, password)))
      problems.push('Choose a password different from the current one.');
    if (problems.length > 0) throw new PasswordPolicyError(problems);
    await tx
      .update(users)
      .set({
        passwordHash: await hashPassword(password),
        failedSignInCount: 0,
        lockedUntil: null,
        updatedAt: sql`now()`,
      })
      .where(eq(users.id, user.id));
    const [used] = await tx
      .update(passwordResets)
      .set({ usedAt: sql`now()` })
      .where(eq(passwordResets.id, reset.id))
      .returning({ usedAt: passwordResets.usedAt });
    const ended = await endSessionsOf(tx, user.id);
    await appendAuditEvent(tx, {
      organisationId: await resetOrganisation(tx, user.id, reset.requestedBy),
      actorUserId: user.id,
      actorLabel: user.email,
      action: 'password.reset',
      recordType: 'user',
      recordId: user.id,
      before: { lockedUntil: user.lockedUntil, failedSignInCount: user.failedSignInCount },
      after: {
        resetId: reset.id,
        usedAt: used?.usedAt ?? null,
        lockedUntil: null,
        failedSignInCount: 0,
        sessionsEnded: ended.length,
      },
      context,
    });
    return { email: user.email, sessionsEnded: ended.length };
  });
}
