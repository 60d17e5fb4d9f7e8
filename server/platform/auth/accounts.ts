import { and, asc, eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../audit/audit-trail.ts';
import type { Database, Transaction } from '../db/client.ts';
import { memberships, organisations, users } from '../db/schema/index.ts';
import { logger } from '../logging/logger.ts';
import { type MailMessage, sendMail } from '../mail/mail-transport.ts';
import { clientNetwork } from './client-network.ts';
import type { KnownBrowser } from './known-browser.ts';
import { lockNotices } from './lockout-notice.ts';
import { decoyPasswordHash, verifyPassword } from './passwords.ts';
import type { Role, SessionUser } from './roles.ts';
import {
  ACCOUNT_WIDE_FACTOR,
  claimLockNotice,
  clearAfterSuccess,
  countFailure,
  loadThrottle,
  lockInForce,
  type ThrottleClient,
  type ThrottleState,
} from './sign-in-throttle.ts';

export type SignInOutcome =
  | { ok: true; user: SessionUser }
  | { ok: false; reason: 'refused' | 'no-membership'; message: string };

/**
 * The one answer to a refused sign-in, whatever the reason — unknown e-mail, wrong password,
 * locked or deactivated account — so that the answer tells nobody whether an address has an
 * account or what state it is in. It names the lock so that the owner knows to look for the
 * message that carries the unlock link.
 */
export const SIGN_IN_REFUSED =
  'The e-mail address or password is not right, or sign-in is locked for a while after repeated failed attempts. If Rateledger sent you a message about a locked account, its link unlocks it.';

export interface RequestContext {
  ip?: string | undefined;
  userAgent?: string | undefined;
  /** The valid known-browser cookie the request showed, if any (`known-browser.ts`). */
  knownBrowser?: KnownBrowser | null;
}

export interface SignInSettings {
  /** Separates the counters of app instances that must not share them (tests). */
  counterPrefix: string;
}

const refused = { ok: false, reason: 'refused', message: SIGN_IN_REFUSED } as const;

/**
 * Checks a sign-in attempt and records it (21 CFR 11.10(e): every attempt is an audit event;
 * 11.300(d) and EU GMP Annex 11 §12.1: repeated failures lock). Every path does the same work in
 * the same order — one Argon2id verification (against a decoy hash for an unknown address, also
 * for a locked or deactivated account), then one transaction — and gives the same answer; the
 * caller also holds every refusal to one minimum duration (`passport-setup.ts`), so neither the
 * text nor the timing tells an address that has an account from one that has none. Locks are
 * per account and client (`sign-in-throttle.ts`); the owner and the administrators are told when
 * one is set, and the messages go out after the answer, never delaying it.
 */
export async function attemptSignIn(
  db: Database,
  emailTyped: string,
  password: string,
  context: RequestContext,
  settings: SignInSettings = { counterPrefix: '' },
): Promise<SignInOutcome> {
  const email = emailTyped.trim().toLowerCase();
  const auditContext = { ip: context.ip, userAgent: context.userAgent };
  const found = await db.query.users.findFirst({ where: eq(users.email, email) });
  const passwordOk = await verifyPassword(found?.passwordHash ?? (await decoyPasswordHash()), password);
  if (!found) {
    await appendAuditEvent(db, {
      actorLabel: email.slice(0, 200),
      action: 'sign-in.failed',
      after: { reason: 'unknown e-mail' },
      context: auditContext,
    });
    return refused;
  }
  const organisation = await primaryOrganisation(db, found.id);
  const audit = { organisationId: organisation?.id ?? null, actorUserId: found.id, actorLabel: found.email };
  const rules = {
    threshold: organisation?.lockoutThreshold ?? 5,
    minutes: organisation?.lockoutMinutes ?? 15,
  };
  const client: ThrottleClient =
    context.knownBrowser?.userId === found.id
      ? { kind: 'browser', nonce: context.knownBrowser.nonce }
      : { kind: 'address', network: clientNetwork(context.ip) };
  const clientLabel = client.kind === 'browser' ? 'known browser' : client.network;

  const { outcome, mail } = await db.transaction(async (tx) => {
    // Lock the user row: concurrent attempts must count one by one.
    const [user] = await tx.select().from(users).where(eq(users.id, found.id)).for('update');
    const gate = await tx.execute<{ in_force: boolean }>(
      sql`select coalesce(${user!.lockedUntil} > now(), false) as in_force`,
    );
    const throttle = await loadThrottle(tx, {
      prefix: settings.counterPrefix,
      userId: user!.id,
      client,
      rules,
      locksInForce: gate.rows[0]!.in_force,
    });
    const none: MailMessage[] = [];
    if (!user!.active) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: { reason: 'account deactivated' },
        context: auditContext,
      });
      return { outcome: refused, mail: none };
    }
    const lock = lockInForce(throttle);
    if (lock) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.refused-locked',
        after: { lockedUntil: lock.until, scope: lock.scope, client: clientLabel },
        context: auditContext,
      });
      return { outcome: refused, mail: none };
    }
    if (!passwordOk) {
      const counted = await countFailure(tx, throttle);
      const failures = user!.failedSignInCount + 1;
      await tx
        .update(users)
        .set({
          failedSignInCount: failures,
          updatedAt: sql`now()`,
          ...(counted.lock
            ? { lockedUntil: sql`greatest(coalesce(${users.lockedUntil}, now()), ${counted.lock.until})` }
            : {}),
        })
        .where(eq(users.id, user!.id));
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: {
          reason: 'wrong password',
          consecutiveFailures: failures,
          failuresFromClient: counted.failuresFromClient,
          client: clientLabel,
        },
        context: auditContext,
      });
      if (!counted.lock) return { outcome: refused, mail: none };
      await appendAuditEvent(tx, {
        ...audit,
        action: 'account.locked',
        recordType: 'user',
        recordId: user!.id,
        after: {
          scope: counted.lock.scope,
          client: clientLabel,
          afterFailures: counted.failuresFromClient,
          minutes: rules.minutes,
          lockedUntil: counted.lock.until,
        },
        context: auditContext,
      });
      const notify = await claimLockNotice(tx, throttle);
      const mail = notify
        ? await lockNotices(tx, {
            account: { ...user!, organisationId: organisation?.id ?? null },
            lock: counted.lock,
            client,
            failures:
              counted.lock.scope === 'account'
                ? rules.threshold * ACCOUNT_WIDE_FACTOR
                : counted.failuresFromClient,
            minutes: rules.minutes,
            context: auditContext,
          })
        : none;
      return { outcome: refused, mail };
    }
    if (!organisation) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: { reason: 'no organisation membership' },
        context: auditContext,
      });
      return {
        outcome: {
          ok: false,
          reason: 'no-membership',
          message: 'This account belongs to no organisation yet. Ask an administrator.',
        } as const,
        mail: none,
      };
    }
    return {
      outcome: await recordSuccess(tx, user!.id, organisation.id, throttle, audit, auditContext),
      mail: none,
    };
  });
  if (mail.length > 0) void sendAfterAnswer(db, mail);
  return outcome;
}

async function recordSuccess(
  tx: Transaction,
  userId: number,
  organisationId: number,
  throttle: ThrottleState,
  audit: { organisationId: number | null; actorUserId: number; actorLabel: string },
  context: Record<string, unknown>,
): Promise<SignInOutcome> {
  // Locks set on other clients (a stranger's address) stay; this client starts again from zero.
  const stillLockedUntil = await clearAfterSuccess(tx, throttle);
  await tx
    .update(users)
    .set({
      failedSignInCount: 0,
      lockedUntil: stillLockedUntil,
      lastSignInAt: sql`now()`,
      updatedAt: sql`now()`,
    })
    .where(eq(users.id, userId));
  await appendAuditEvent(tx, { ...audit, action: 'sign-in', context });
  const sessionUser = await loadSessionUser(tx as unknown as Database, userId, organisationId);
  return { ok: true, user: sessionUser! };
}

/** Lock messages go out once the answer is on its way; a failure is logged (sendMail records it). */
async function sendAfterAnswer(db: Database, mail: MailMessage[]) {
  try {
    for (const message of mail) await sendMail(db, message);
  } catch (error) {
    logger.error({ err: error }, 'sign-in lock notice not sent');
  }
}

async function primaryOrganisation(db: Database, userId: number) {
  const [row] = await db
    .select({
      id: organisations.id,
      lockoutThreshold: organisations.lockoutThreshold,
      lockoutMinutes: organisations.lockoutMinutes,
    })
    .from(memberships)
    .innerJoin(organisations, eq(organisations.id, memberships.organisationId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(memberships.organisationId))
    .limit(1);
  return row;
}

/** The signed-in person with their roles in one organisation; null when no longer allowed in. */
export async function loadSessionUser(
  db: Database,
  userId: number,
  organisationId: number,
): Promise<SessionUser | null> {
  const rows = await db
    .select({
      id: users.id,
      email: users.email,
      fullName: users.fullName,
      active: users.active,
      organisationName: organisations.name,
      role: memberships.role,
    })
    .from(users)
    .innerJoin(memberships, eq(memberships.userId, users.id))
    .innerJoin(organisations, eq(organisations.id, memberships.organisationId))
    .where(and(eq(users.id, userId), eq(memberships.organisationId, organisationId)));
  const first = rows[0];
  if (!first?.active) return null;
  return {
    id: first.id,
    email: first.email,
    fullName: first.fullName,
    organisationId,
    organisationName: first.organisationName,
    roles: rows.map((row) => row.role as Role),
  };
}
