import { integer, pgEnum, pgTable, serial, text, unique } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/** The kinds of record that can be retired. */
export const retiredRecordTypeEnum = pgEnum('retired_record_type', ['dataset', 'analysis_run', 'report']);

/**
 * A record made by mistake, retired with a reason: hidden from the default lists, never deleted,
 * still reachable from everything that refers to it. The retired record itself is write-once and
 * is not touched; the retirement is this appended row of its own (write-once too, by trigger), so
 * a record is retired at most once (ALCOA+ "enduring"; 21 CFR 11.10(e)).
 */
export const retirements = pgTable(
  'retirements',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    recordType: retiredRecordTypeEnum('record_type').notNull(),
    recordId: integer('record_id').notNull(),
    reason: text('reason').notNull(),
    retiredBy: integer('retired_by')
      .notNull()
      .references(() => users.id),
    retiredAt: createdAt(),
  },
  (table) => [unique('retirements_once').on(table.recordType, table.recordId)],
);
