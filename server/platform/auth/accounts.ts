import { and, asc, eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../audit/audit-trail.ts';
import type { Database } from '../db/client.ts';
import { memberships, organisations, users } from '../db/schema/index.ts';
import { decoyPasswordHash, verifyPassword } from './passwords.ts';
import type { Role, SessionUser } from './roles.ts';

export type SignInOutcome =
  | { ok: true; user: SessionUser }
  | { ok: false; reason: 'wrong-credentials' | 'locked' | 'inactive' | 'no-membership'; message: string };

const WRONG_CREDENTIALS = 'The e-mail address or password is not right.';

export interface RequestContext {
  ip?: string | undefined;
  userAgent?: string | undefined;
}

/**
 * Checks a sign-in attempt and records it. Repeated failures lock the account for the
 * organisation's lockout period (21 CFR 11.300(d); EU GMP Annex 11 §12.1). Every outcome is an
 * audit event; the message never tells whether the e-mail exists.
 */
export async function attemptSignIn(
  db: Database,
  emailTyped: string,
  password: string,
  context: RequestContext,
): Promise<SignInOutcome> {
  const email = emailTyped.trim().toLowerCase();
  const found = await db.query.users.findFirst({ where: eq(users.email, email) });
  if (!found) {
    await verifyPassword(await decoyPasswordHash(), password);
    await appendAuditEvent(db, {
      actorLabel: email.slice(0, 200),
      action: 'sign-in.failed',
      after: { reason: 'unknown e-mail' },
      context: { ...context },
    });
    return { ok: false, reason: 'wrong-credentials', message: WRONG_CREDENTIALS };
  }
  const organisation = await primaryOrganisation(db, found.id);
  const audit = { organisationId: organisation?.id ?? null, actorUserId: found.id, actorLabel: found.email };

  return db.transaction(async (tx) => {
    // Lock the user row: concurrent attempts must count one by one.
    const [user] = await tx.select().from(users).where(eq(users.id, found.id)).for('update');
    // drizzle hands raw timestamps back as text, so read the database clock as epoch milliseconds.
    const clock = await tx.execute<{ ms: string }>(
      sql`select (extract(epoch from now()) * 1000)::text as ms`,
    );
    const now = new Date(Number(clock.rows[0]!.ms));
    if (!user!.active) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: { reason: 'account deactivated' },
        context: { ...context },
      });
      return { ok: false, reason: 'inactive', message: WRONG_CREDENTIALS } as const;
    }
    if (user!.lockedUntil && user!.lockedUntil > now) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.refused-locked',
        after: { lockedUntil: user!.lockedUntil },
        context: { ...context },
      });
      return {
        ok: false,
        reason: 'locked',
        message: `This account is locked after repeated failed sign-ins until ${user!.lockedUntil.toISOString().slice(11, 16)} UTC. Try again then, or ask an administrator to unlock it.`,
      } as const;
    }
    const passwordOk = await verifyPassword(user!.passwordHash, password);
    if (!passwordOk) {
      const failures = user!.failedSignInCount + 1;
      const threshold = organisation?.lockoutThreshold ?? 5;
      const lock = failures >= threshold;
      await tx
        .update(users)
        .set({
          failedSignInCount: lock ? 0 : failures,
          lockedUntil: lock
            ? sql`now() + make_interval(mins => ${organisation?.lockoutMinutes ?? 15})`
            : user!.lockedUntil,
          updatedAt: sql`now()`,
        })
        .where(eq(users.id, user!.id));
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: { reason: 'wrong password', consecutiveFailures: failures },
        context: { ...context },
      });
      if (lock) {
        await appendAuditEvent(tx, {
          ...audit,
          action: 'account.locked',
          recordType: 'user',
          recordId: user!.id,
          after: { afterFailures: failures, minutes: organisation?.lockoutMinutes ?? 15 },
          context: { ...context },
        });
        return {
          ok: false,
          reason: 'locked',
          message: `Too many failed sign-ins: the account is now locked for ${organisation?.lockoutMinutes ?? 15} minutes.`,
        } as const;
      }
      return { ok: false, reason: 'wrong-credentials', message: WRONG_CREDENTIALS } as const;
    }
    if (!organisation) {
      await appendAuditEvent(tx, {
        ...audit,
        action: 'sign-in.failed',
        after: { reason: 'no organisation membership' },
        context: { ...context },
      });
      return {
        ok: false,
        reason: 'no-membership',
        message: 'This account belongs to no organisation yet. Ask an administrator.',
      } as const;
    }
    await tx
      .update(users)
      .set({ failedSignInCount: 0, lockedUntil: null, lastSignInAt: sql`now()`, updatedAt: sql`now()` })
      .where(eq(users.id, user!.id));
    await appendAuditEvent(tx, { ...audit, action: 'sign-in', context: { ...context } });
    const sessionUser = await loadSessionUser(tx as unknown as Database, user!.id, organisation.id);
    return { ok: true, user: sessionUser! } as const;
  });
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
