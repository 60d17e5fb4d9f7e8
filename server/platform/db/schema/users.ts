import { boolean, integer, pgTable, serial, text, timestamp } from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';

/**
 * A person who signs in. Users are never deleted: their records and signatures must stay
 * attributable (21 CFR 11.10(e), ALCOA+ "attributable"); `active = false` retires an account.
 */
export const users = pgTable('users', {
  id: serial('id').primaryKey(),
  email: text('email').notNull().unique(),
  /** Printed name used in the signature manifestation (21 CFR 11.50). */
  fullName: text('full_name').notNull(),
  passwordHash: text('password_hash').notNull(),
  active: boolean('active').notNull().default(true),
  failedSignInCount: integer('failed_sign_in_count').notNull().default(0),
  lockedUntil: timestamp('locked_until', { withTimezone: true, mode: 'date' }),
  lastSignInAt: timestamp('last_sign_in_at', { withTimezone: true, mode: 'date' }),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});
