/**
 * The audit trail as CSV: every event of a filter, in chain order (ascending id), streamed batch by
 * batch so a trail of millions of events never sits in memory.
 *
 * Format: written by the product's one CSV writer (`server/platform/export/csv-writer.ts`): RFC
 * 4180 — comma-separated, CRLF line ends, a header row; a cell holding a comma, a double quote, CR
 * or LF is wrapped in double quotes with inner quotes doubled. Encoding UTF-8 without a byte-order
 * mark, so a program reading the columns sees `id` as the first name. `occurred_at` is the exact
 * hashed database time (ISO 8601, UTC, microseconds); `before`, `after` and `context` are JSON; an
 * absent value is an empty cell. With the hashes included, a reader can recompute the chain from
 * the file.
 *
 * Formula injection (OWASP "CSV Injection"): the writer's guard gives a text cell that begins with
 * `=`, `+`, `-`, `@`, tab or CR — an actor label typed at the sign-in form, say, or a JSON value
 * like `-5` — a leading apostrophe (`'=HYPERLINK(...)`), which spreadsheets show as text. A program
 * re-reading the file must strip that one apostrophe from cells where it precedes one of those
 * characters. Ids are numbers and are written as numbers.
 *
 * The export stops at the newest event that existed when it started (`upToEventId`), so events
 * appended while it streams do not make it a moving target.
 */
import { and, asc, gt, lte, sql } from 'drizzle-orm';
import type { AuditFilter } from '../../../shared/api/audit.ts';
import type { Executor } from '../../platform/db/client.ts';
import { auditEvents } from '../../platform/db/schema/index.ts';
import { csvRecords } from '../../platform/export/csv-writer.ts';
import { auditConditions } from './audit-viewer.ts';

export const AUDIT_CSV_COLUMNS = [
  'id',
  'occurred_at',
  'organisation_id',
  'actor_user_id',
  'actor_label',
  'action',
  'record_type',
  'record_id',
  'before',
  'after',
  'context',
  'previous_hash',
  'hash',
] as const;

/** Rows fetched per query: large enough to be quick, small enough to bound memory. */
export const AUDIT_EXPORT_BATCH = 500;

const json = (value: unknown) => (value === null || value === undefined ? null : JSON.stringify(value));

/** The CSV text, header first, then one chunk per batch of events. */
export async function* auditCsvChunks(
  db: Executor,
  organisationId: number,
  filter: AuditFilter,
  timeZone: string,
  upToEventId: number,
  batchSize = AUDIT_EXPORT_BATCH,
): AsyncGenerator<string> {
  yield csvRecords([AUDIT_CSV_COLUMNS]);
  const where = auditConditions(organisationId, filter, timeZone);
  let afterId = 0;
  for (;;) {
    const batch = await db
      .select({
        id: auditEvents.id,
        occurredAt: sql<string>`to_char(${auditEvents.occurredAt} at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`,
        organisationId: auditEvents.organisationId,
        actorUserId: auditEvents.actorUserId,
        actorLabel: auditEvents.actorLabel,
        action: auditEvents.action,
        recordType: auditEvents.recordType,
        recordId: auditEvents.recordId,
        beforeValue: auditEvents.beforeValue,
        afterValue: auditEvents.afterValue,
        context: auditEvents.context,
        previousHash: auditEvents.previousHash,
        hash: auditEvents.hash,
      })
      .from(auditEvents)
      .where(and(where, gt(auditEvents.id, afterId), lte(auditEvents.id, upToEventId)))
      .orderBy(asc(auditEvents.id))
      .limit(batchSize);
    if (batch.length === 0) return;
    yield csvRecords(
      batch.map((row) => [
        row.id,
        row.occurredAt,
        row.organisationId,
        row.actorUserId,
        row.actorLabel,
        row.action,
        row.recordType,
        row.recordId,
        json(row.beforeValue),
        json(row.afterValue),
        json(row.context),
        row.previousHash,
        row.hash,
      ]),
    );
    afterId = batch[batch.length - 1]!.id;
    if (batch.length < batchSize) return;
  }
}
