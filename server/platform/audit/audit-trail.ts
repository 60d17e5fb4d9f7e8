import { sql } from 'drizzle-orm';
import type { Database, Executor } from '../db/client.ts';
import { auditEvents } from '../db/schema/index.ts';
import { auditEventHash, GENESIS_HASH, type HashedAuditContent } from './audit-hash.ts';

/** One advisory-lock key for the chain: appends are serialised so each sees its predecessor. */
const AUDIT_CHAIN_LOCK = 7_305_001;
const TIMESTAMP_FORMAT = `'YYYY-MM-DD"T"HH24:MI:SS.US"Z"'`;

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
 * event commits or rolls back with the change it describes.
 */
export async function appendAuditEvent(executor: Executor, input: AuditEventInput): Promise<{ id: number }> {
  const run = async (tx: Executor) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${AUDIT_CHAIN_LOCK})`);
    const last = await tx.execute<{ hash: string }>(
      sql`select hash from audit_events order by id desc limit 1`,
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
  let afterId = 0;
  let checked = 0;
  for (;;) {
    const batch = await db.execute<{
      id: string;
      occurred_at: string;
      organisation_id: number | null;
      actor_user_id: number | null;
      actor_label: string;
      action: string;
      record_type: string | null;
      record_id: string | null;
      before_value: unknown;
      after_value: unknown;
      context: unknown;
      previous_hash: string;
      hash: string;
    }>(
      sql.raw(
        `select id, to_char(occurred_at at time zone 'UTC', ${TIMESTAMP_FORMAT}) as occurred_at, organisation_id,
          actor_user_id, actor_label, action, record_type, record_id, before_value, after_value, context,
          previous_hash, hash from audit_events where id > ${Number(afterId)} order by id limit ${Number(batchSize)}`,
      ),
    );
    if (batch.rows.length === 0) return { ok: true, eventsChecked: checked };
    for (const row of batch.rows) {
      const id = Number(row.id);
      if (row.previous_hash !== previousHash) {
        return {
          ok: false,
          eventsChecked: checked,
          firstBrokenLink: { id, reason: 'previous-hash link does not match the preceding event' },
        };
      }
      const expected = auditEventHash({
        previousHash: row.previous_hash,
        occurredAt: row.occurred_at,
        organisationId: row.organisation_id,
        actorUserId: row.actor_user_id,
        actorLabel: row.actor_label,
        action: row.action,
        recordType: row.record_type,
        recordId: row.record_id,
        beforeValue: row.before_value,
        afterValue: row.after_value,
        context: row.context,
      });
      if (expected !== row.hash) {
        return {
          ok: false,
          eventsChecked: checked,
          firstBrokenLink: { id, reason: 'content does not match its stored hash' },
        };
      }
      previousHash = row.hash;
      afterId = id;
      checked += 1;
    }
  }
}
