import { sql } from 'drizzle-orm';
import { timestamp } from 'drizzle-orm/pg-core';

/**
 * Timestamps come from the database clock (`now()`), never from the application server, so every
 * record of one transaction carries one consistent, attributable time (ALCOA+ "contemporaneous").
 */
export const createdAt = () =>
  timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().default(sql`now()`);

export const updatedAt = () =>
  timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().default(sql`now()`);
