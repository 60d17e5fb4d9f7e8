import { and, desc, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { auditEvents } from '../../platform/db/schema/index.ts';

/**
 * Why a locked account is locked, from its latest `account.locked` event in this organisation's
 * trail: how many failed sign-ins from which client set the lock. The account's own counter
 * (`failed_sign_in_count`) restarts at 0 when the owner signs in from their own browser, while a
 * lock set by failures from another client stays (sign-in throttle by account and client), so
 * the counter alone read "Failed sign-ins in a row 0" beside "Locked". Null when not found.
 */
export async function lockCause(
  db: Executor,
  organisationId: number,
  userId: number,
): Promise<{ failures: number; client: string } | null> {
  const [event] = await db
    .select({ after: auditEvents.afterValue })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.organisationId, organisationId),
        eq(auditEvents.action, 'account.locked'),
        eq(auditEvents.recordType, 'user'),
        eq(auditEvents.recordId, String(userId)),
      ),
    )
    .orderBy(desc(auditEvents.id))
    .limit(1);
  const after = (event?.after ?? null) as { afterFailures?: unknown; client?: unknown } | null;
  if (!after || typeof after.afterFailures !== 'number') return null;
  return {
    failures: after.afterFailures,
    client: typeof after.client === 'string' ? after.client : 'a client',
  };
}
