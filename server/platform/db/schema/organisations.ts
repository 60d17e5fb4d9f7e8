import { integer, pgTable, serial, text } from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';

/** A laboratory organisation: the unit that owns studies, templates, settings and memberships. */
export const organisations = pgTable('organisations', {
  id: serial('id').primaryKey(),
  slug: text('slug').notNull().unique(),
  name: text('name').notNull(),
  /** IANA time zone used when printing dates in reports and screens. */
  timeZone: text('time_zone').notNull().default('UTC'),
  /** Failed sign-ins in a row before the account locks (EU Annex 11 §12, 21 CFR 11.300(d)). */
  lockoutThreshold: integer('lockout_threshold').notNull().default(5),
  /** How long a locked account stays locked, in minutes. */
  lockoutMinutes: integer('lockout_minutes').notNull().default(15),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});
