import { and, eq, inArray, ne, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../audit/audit-trail.ts';
import type { Transaction } from '../db/client.ts';
import { memberships, organisations, passwordResets, users } from '../db/schema/index.ts';
import type { MailMessage } from '../mail/mail-transport.ts';
import { signInLockedAdminMail, signInLockedOwnerMail } from '../mail/messages.ts';
import { newOneTimeLink } from './one-time-link.ts';
import type { Lock, ThrottleClient } from './sign-in-throttle.ts';

/**
 * What is said when failed sign-ins lock an account: the owner gets a message with a one-time
 * password-reset link (the ordinary reset page; choosing a new password also lifts every lock),
 * and the administrators of each organisation the account belongs to are told (21 CFR 11.300(d)).
 * The link is recorded like an administrator's (`password.reset-requested`, by Rateledger itself).
 * The caller sends the messages after its transaction has committed.
 */

/** How long the unlock link works; the same as an administrator's reset link. */
export const UNLOCK_LINK_HOURS = 24;

export interface LockedAccount {
  id: number;
  email: string;
  fullName: string;
  organisationId: number | null;
}

function describe(lock: Lock, client: ThrottleClient, ip: string | undefined) {
  if (lock.scope === 'account')
    return {
      where: `from several addresses within a short time (the last from ${ip ?? 'an unknown address'})`,
      refused: 'sign-in to the account from every browser that has not signed in to it before',
      unaffected: 'Browsers that have signed in to this account before can still sign in.',
    };
  if (client.kind === 'browser')
    return {
      where: 'from a browser that has signed in to this account before',
      refused: 'sign-in from that browser',
      unaffected: 'Sign-in from other browsers is not affected.',
    };
  return {
    where: `from the address ${ip ?? 'unknown'}`,
    refused: 'sign-in from that address',
    unaffected:
      'Sign-in from other addresses, and from browsers that have signed in to this account before, is not affected.',
  };
}

export async function lockNotices(
  tx: Transaction,
  input: {
    account: LockedAccount;
    lock: Lock;
    client: ThrottleClient;
    failures: number;
    minutes: number;
    context: { ip?: string | undefined; userAgent?: string | undefined };
  },
): Promise<MailMessage[]> {
  const { account, lock } = input;
  const { token, digest } = newOneTimeLink();
  const [reset] = await tx
    .insert(passwordResets)
    .values({
      userId: account.id,
      tokenSha256: digest,
      expiresAt: sql`now() + make_interval(hours => ${UNLOCK_LINK_HOURS})` as unknown as Date,
      requestedBy: null,
    })
    .returning();
  await appendAuditEvent(tx, {
    organisationId: account.organisationId,
    actorUserId: null,
    actorLabel: 'Rateledger',
    action: 'password.reset-requested',
    recordType: 'user',
    recordId: account.id,
    after: {
      resetId: reset!.id,
      expiresAt: reset!.expiresAt,
      reason: 'sign-in locked after failed attempts',
    },
    context: { ...input.context, subject: account.email },
  });

  const organisationRows = await tx
    .selectDistinct({ id: organisations.id, timeZone: organisations.timeZone })
    .from(memberships)
    .innerJoin(organisations, eq(organisations.id, memberships.organisationId))
    .where(eq(memberships.userId, account.id));
  const zoneOf = (organisationId: number | null) =>
    organisationRows.find((row) => row.id === organisationId)?.timeZone ?? 'UTC';
  const words = { ...describe(lock, input.client, input.context.ip), failures: input.failures };
  const common = { ...words, lockedUntil: lock.until, quietMinutes: input.minutes };

  const mail: MailMessage[] = [
    {
      organisationId: account.organisationId,
      kind: 'sign-in-locked',
      to: { name: account.fullName, address: account.email },
      ...signInLockedOwnerMail({
        ...common,
        timeZone: zoneOf(account.organisationId),
        recipientName: account.fullName,
        email: account.email,
        unlockPath: `/password-reset/${token}`,
        linkExpiresAt: reset!.expiresAt,
      }),
      record: { type: 'user', id: account.id },
    },
  ];
  if (organisationRows.length === 0) return mail;
  const admins = await tx
    .selectDistinct({
      organisationId: memberships.organisationId,
      fullName: users.fullName,
      email: users.email,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        inArray(
          memberships.organisationId,
          organisationRows.map((row) => row.id),
        ),
        eq(memberships.role, 'admin'),
        eq(users.active, true),
        ne(users.id, account.id),
      ),
    );
  for (const organisation of organisationRows) {
    const recipients = admins.filter((admin) => admin.organisationId === organisation.id);
    if (recipients.length === 0) continue;
    mail.push({
      organisationId: organisation.id,
      kind: 'sign-in-locked-admin',
      to: recipients.map((admin) => ({ name: admin.fullName, address: admin.email })),
      ...signInLockedAdminMail({
        ...common,
        timeZone: organisation.timeZone,
        memberName: account.fullName,
        memberEmail: account.email,
        personPath: `/admin/people/${account.id}`,
      }),
      record: { type: 'user', id: account.id },
    });
  }
  return mail;
}
