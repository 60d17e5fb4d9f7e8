import { integer, pgTable, text, timestamp } from 'drizzle-orm/pg-core';

/**
 * Request counters for rate limiting, kept in PostgreSQL rather than process memory so that
 * several app instances behind a load balancer share one limit.
 */
export const rateLimitHits = pgTable('rate_limit_hits', {
  key: text('key').primaryKey(),
  hits: integer('hits').notNull(),
  resetAt: timestamp('reset_at', { withTimezone: true, mode: 'date' }).notNull(),
});
