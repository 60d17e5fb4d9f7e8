import { bigserial, index, integer, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/**
 * The audit trail: who did what to which record, with before/after values and the database time.
 * Each row stores the hash of the previous row and its own hash over its content, so any edit,
 * insertion or removal breaks the chain. UPDATE, DELETE and TRUNCATE are refused by triggers
 * (migration 0001), so the table is append-only for every role the application uses.
 */
export const auditEvents = pgTable(
  'audit_events',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    occurredAt: timestamp('occurred_at', { withTimezone: true, mode: 'date' }).notNull(),
    organisationId: integer('organisation_id').references(() => organisations.id),
    actorUserId: integer('actor_user_id').references(() => users.id),
    /** What the actor typed or was known as, kept even when no user row matches (failed sign-in). */
    actorLabel: text('actor_label').notNull(),
    action: text('action').notNull(),
    recordType: text('record_type'),
    recordId: text('record_id'),
    beforeValue: jsonb('before_value'),
    afterValue: jsonb('after_value'),
    /** Client address and other context of the request, for investigations. */
    context: jsonb('context'),
    previousHash: text('previous_hash').notNull(),
    hash: text('hash').notNull().unique(),
  },
  (table) => [
    index('audit_events_org_time').on(table.organisationId, table.occurredAt),
    index('audit_events_record').on(table.recordType, table.recordId),
  ],
);
