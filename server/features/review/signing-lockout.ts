import { and, eq, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor, Transaction } from '../../platform/db/client.ts';
import { memberships, signingLockouts, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { sendMail } from '../../platform/mail/mail-transport.ts';
import { organisationOf } from './organisation-record.ts';
import type { ReviewActionContext } from './review-action.ts';
import type { ReviewVersion } from './review-version.ts';

/**
 * Failed signing attempts and the signing lock (21 CFR 11.300(d)): after the organisation's
 * `lockout_threshold` failures in a row signing is locked for `lockout_minutes`, and the
 * organisation's administrators are told by mail at once. Signing in stays possible; only
 * signing is locked. A successful signature clears the count.
 */

/** The signer's signing lock, judged by the database clock. */
export async function signingLock(db: Executor, userId: number) {
  const result = await db.execute<{ locked: boolean; until: string | null }>(
    sql`select locked_until > now() as locked,
          to_char(locked_until at time zone 'UTC', 'YYYY-MM-DD HH24:MI "UTC"') as until
        from signing_lockouts where user_id = ${userId}`,
  );
  const row = result.rows[0];
  return { locked: row?.locked === true, until: row?.until ?? null };
}

/** Adds one to the signer's failures in a row and records the failed attempt; returns the new count. */
async function countFailure(
  tx: Transaction,
  context: ReviewActionContext,
  subject: ReviewVersion,
  reason: string,
): Promise<number> {
  const { actor } = context;
  const [row] = await tx
    .insert(signingLockouts)
    .values({ userId: actor.id, failedAttempts: 1 })
    .onConflictDoUpdate({
      target: signingLockouts.userId,
      set: { failedAttempts: sql`${signingLockouts.failedAttempts} + 1`, updatedAt: sql`now()` },
    })
    .returning({ failures: signingLockouts.failedAttempts });
  const failures = row!.failures;
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'signature.failed',
    recordType: 'report_version',
    recordId: subject.version.id,
    after: {
      reportNumber: subject.report.reportNumber,
      versionNumber: subject.version.versionNumber,
      reason,
      consecutiveFailures: failures,
    },
    context: context.audit,
  });
  return failures;
}

/** Locks the signer's signing for `minutes` (the count starts again) and records the lock. */
async function lockSigning(
  tx: Transaction,
  context: ReviewActionContext,
  lock: { minutes: number; afterFailures: number },
): Promise<void> {
  const { actor } = context;
  await tx
    .update(signingLockouts)
    .set({
      failedAttempts: 0,
      lockedUntil: sql`now() + make_interval(mins => ${lock.minutes})`,
      updatedAt: sql`now()`,
    })
    .where(eq(signingLockouts.userId, actor.id));
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'signature.locked',
    recordType: 'user',
    recordId: actor.id,
    after: { afterFailures: lock.afterFailures, minutes: lock.minutes },
    context: context.audit,
  });
}

/** Counts a failed signing attempt; locks signing at the threshold. Returns the error to answer with. */
export async function recordSigningFailure(
  context: ReviewActionContext,
  subject: ReviewVersion,
  reason: string,
): Promise<HttpError> {
  const { db, actor } = context;
  const { lockoutThreshold, lockoutMinutes } = await organisationOf(db, actor.organisationId);
  const outcome = await db.transaction(async (tx) => {
    const failures = await countFailure(tx, context, subject, reason);
    const lock = failures >= lockoutThreshold;
    if (lock) await lockSigning(tx, context, { minutes: lockoutMinutes, afterFailures: failures });
    return { failures, lock };
  });
  if (outcome.lock) {
    await alertAdministrators(db, actor, lockoutMinutes, outcome.failures);
    return new HttpError(
      423,
      `Too many failed signing attempts: signing is locked for ${lockoutMinutes} minutes. Your administrators have been told.`,
    );
  }
  const left = lockoutThreshold - outcome.failures;
  return new HttpError(
    401,
    `The user ID or password is not right; nothing was signed. ${left} attempt${left === 1 ? '' : 's'} left before signing locks.`,
    [{ field: 'password', message: 'Re-enter your own password.' }],
  );
}

/** A successful signature: the count of failures in a row starts again from zero. */
export async function clearSigningFailures(tx: Transaction, userId: number): Promise<void> {
  await tx
    .insert(signingLockouts)
    .values({ userId, failedAttempts: 0 })
    .onConflictDoUpdate({
      target: signingLockouts.userId,
      set: { failedAttempts: 0, lockedUntil: null, updatedAt: sql`now()` },
    });
}

/** 21 CFR 11.300(d): attempts at unauthorised use are reported at once to those responsible. */
async function alertAdministrators(db: Database, actor: SessionUser, minutes: number, failures: number) {
  const admins = await db
    .selectDistinct({ fullName: users.fullName, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, actor.organisationId),
        eq(memberships.role, 'admin'),
        eq(users.active, true),
      ),
    );
  if (admins.length === 0) return;
  const text = [
    'Hello,',
    `Electronic signing by ${actor.fullName} (${actor.email}) is locked for ${minutes} minutes after ${failures} failed signing attempts in a row.`,
    'If this was not them, their password may be known to someone else: check the audit trail (action signature.failed) and reset the password.',
    '--',
    'This message was sent by Rateledger. Do not reply to it.',
  ].join('\n\n');
  await sendMail(db, {
    organisationId: actor.organisationId,
    kind: 'signing-locked',
    to: admins.map((admin) => ({ name: admin.fullName, address: admin.email })),
    subject: `Signing locked for ${actor.fullName} after failed attempts`,
    text,
    record: { type: 'user', id: actor.id },
  });
}
