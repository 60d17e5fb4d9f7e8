import { integer, jsonb, pgTable, serial, text, unique } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/**
 * The review checklist an organisation's admins keep: the points a reviewer confirms before
 * signing. Versioned and write-once (trigger): each save is a new version with its reason, the
 * current checklist is the newest version, and an empty list means no checklist. A signature
 * names the version it confirmed and copies its items (`signatures.checklist_confirmed`), so the
 * record stands alone (21 CFR 11.10(e), 11.50; EU GMP Annex 11 §10).
 */
export const reviewChecklists = pgTable(
  'review_checklists',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    versionNumber: integer('version_number').notNull(),
    items: jsonb('items').$type<string[]>().notNull(),
    reason: text('reason').notNull(),
    createdBy: integer('created_by')
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (table) => [unique('review_checklists_version').on(table.organisationId, table.versionNumber)],
);
