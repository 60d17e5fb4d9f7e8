import { sql } from 'drizzle-orm';
import type { Database, Executor } from '../db/client.ts';
import { auditEvents } from '../db/schema/index.ts';
import { auditEventHash, GENESIS_HASH, type HashedAuditContent } from './audit-hash.ts';
import {
  ALTERED_REASON,
  BROKEN_LINK_REASON,
  storedAuditEvents,
  TIMESTAMP_FORMAT,
} from './stored-audit-events.ts';

/** One advisory-lock key for the chain: appends are serialised so each sees its predecessor. */
const AUDIT_CHAIN_LOCK = 7_305_001;

export interface AuditEventInput {
  organisationId?: number | null;
  actorUserId?: number | null;
  actorLabel: string;
  action: string;
  recordType?: string | null;
  recordId?: string | number | null;
  before?: unknown;
  after?: unknown;
  context?: Record<string, unknown> | null;
}

/**
 * Appends an event to the audit trail inside the caller's transaction (or a new one), so the
 * event commits or rolls back with the change it describes. The chain's head is anchored outside
 * the database by `audit-anchoring.ts`; the full check is `audit-trail-check.ts`.
 */
export async function appendAuditEvent(executor: Executor, input: AuditEventInput): Promise<{ id: number }> {
  const run = async (tx: Executor) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${AUDIT_CHAIN_LOCK})`);
    const last = await tx.execute<{ id: string; hash: string }>(
      sql`select id, hash from audit_events order by id desc limit 1`,
    );
    const clock = await tx.execute<{ now: string }>(
      sql.raw(`select to_char(clock_timestamp() at time zone 'UTC', ${TIMESTAMP_FORMAT}) as now`),
    );
    const content: HashedAuditContent = {
      previousHash: last.rows[0]?.hash ?? GENESIS_HASH,
      occurredAt: clock.rows[0]!.now,
      organisationId: input.organisationId ?? null,
      actorUserId: input.actorUserId ?? null,
      actorLabel: input.actorLabel,
      action: input.action,
      recordType: input.recordType ?? null,
      recordId: input.recordId === undefined || input.recordId === null ? null : String(input.recordId),
      beforeValue: normalise(input.before),
      afterValue: normalise(input.after),
      context: normalise(input.context),
    };
    const [row] = await tx
      .insert(auditEvents)
      .values({
        // Ids without gaps: the next after the head, taken under the chain's lock (a sequence would
        // skip the ids of rolled-back appends), so a missing id means a removed event.
        id: Number(last.rows[0]?.id ?? 0) + 1,
        ...content,
        occurredAt: sql`${content.occurredAt}::timestamptz` as unknown as Date,
        hash: auditEventHash(content),
      })
      .returning({ id: auditEvents.id });
    return { id: row!.id };
  };
  if ('rollback' in executor) return run(executor);
  return (executor as Database).transaction(run);
}

/** JSON round trip, so the hashed value is exactly what jsonb will give back. */
function normalise(value: unknown): unknown {
  if (value === undefined || value === null) return null;
  return JSON.parse(JSON.stringify(value));
}

export interface ChainCheck {
  ok: boolean;
  eventsChecked: number;
  /** The first event whose stored hash or link does not match, when the chain is broken. */
  firstBrokenLink?: { id: number; reason: string };
}

/** Recomputes every hash in order and reports the first broken link. */
export async function verifyAuditChain(db: Executor, batchSize = 1000): Promise<ChainCheck> {
  let previousHash = GENESIS_HASH;
  let checked = 0;
  for await (const row of storedAuditEvents(db, batchSize)) {
    if (row.previousHash !== previousHash) {
      return {
        ok: false,
        eventsChecked: checked,
        firstBrokenLink: { id: row.id, reason: BROKEN_LINK_REASON },
      };
    }
    if (row.recomputedHash !== row.hash) {
      return { ok: false, eventsChecked: checked, firstBrokenLink: { id: row.id, reason: ALTERED_REASON } };
    }
    previousHash = row.hash;
    checked += 1;
  }
  return { ok: true, eventsChecked: checked };
}
