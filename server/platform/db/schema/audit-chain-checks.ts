import { bigint, index, integer, jsonb, pgTable, serial, text, timestamp } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/**
 * Chain checks run as a background job (a large trail takes longer than a request should): one
 * row per requested check, with its progress, so any app instance can show it and a restart loses
 * nothing. The row is working state, not a record: the outcome is recorded as the
 * `audit.chain-checked` audit event it names (`outcome_event_id`).
 */
export const auditChainChecks = pgTable(
  'audit_chain_checks',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    requestedBy: integer('requested_by')
      .notNull()
      .references(() => users.id),
    requestedAt: createdAt(),
    /** `queued` → `running` → `done` | `failed`. */
    status: text('status').notNull().default('queued'),
    /** The trail's newest event id when the check was asked for: the size the progress is measured against. */
    eventsExpected: bigint('events_expected', { mode: 'number' }).notNull(),
    eventsScanned: bigint('events_scanned', { mode: 'number' }).notNull().default(0),
    startedAt: timestamp('started_at', { withTimezone: true, mode: 'date' }),
    progressAt: timestamp('progress_at', { withTimezone: true, mode: 'date' }),
    finishedAt: timestamp('finished_at', { withTimezone: true, mode: 'date' }),
    /** The request's audit context, recorded with the outcome event. */
    context: jsonb('context').notNull(),
    outcomeEventId: bigint('outcome_event_id', { mode: 'number' }),
    failure: text('failure'),
  },
  (table) => [index('audit_chain_checks_org').on(table.organisationId, table.id)],
);
