import { json, pgTable, timestamp, varchar } from 'drizzle-orm/pg-core';

/** Session store table in the layout connect-pg-simple reads and writes. */
export const sessions = pgTable('session', {
  sid: varchar('sid').primaryKey(),
  sess: json('sess').notNull(),
  expire: timestamp('expire', { precision: 6, mode: 'date' }).notNull(),
});
