import { sql } from 'drizzle-orm';
import type { Executor } from '../db/client.ts';
import { auditEventHash } from './audit-hash.ts';

/** How PostgreSQL prints the hashed time: ISO 8601, UTC, microseconds. */
export const TIMESTAMP_FORMAT = `'YYYY-MM-DD"T"HH24:MI:SS.US"Z"'`;

export const BROKEN_LINK_REASON = 'previous-hash link does not match the preceding event';
export const ALTERED_REASON = 'content does not match its stored hash';

export interface StoredAuditEvent {
  id: number;
  organisationId: number | null;
  previousHash: string;
  hash: string;
  /** SHA-256 recomputed from the stored content and stored previous hash. */
  recomputedHash: string;
}

/** Every stored event in chain (id) order, batch by batch, each with its hash recomputed. */
export async function* storedAuditEvents(db: Executor, batchSize = 1000): AsyncGenerator<StoredAuditEvent> {
  let afterId = 0;
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
    for (const row of batch.rows) {
      yield {
        id: Number(row.id),
        organisationId: row.organisation_id,
        previousHash: row.previous_hash,
        hash: row.hash,
        recomputedHash: auditEventHash({
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
        }),
      };
    }
    if (batch.rows.length < batchSize) return;
    afterId = Number(batch.rows[batch.rows.length - 1]!.id);
  }
}
