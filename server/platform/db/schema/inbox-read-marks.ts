import { integer, pgTable, primaryKey, text } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { users } from './users.ts';

/**
 * Which inbox items a person has marked read. The items themselves are not copied: they are read
 * from the review records (assignments, returns, signatures); a mark only names one by its key
 * (`assigned:<version>:<round>`, `returned:<version>:<round>`, `signed:<signature>`).
 */
export const inboxReadMarks = pgTable(
  'inbox_read_marks',
  {
    userId: integer('user_id')
      .notNull()
      .references(() => users.id),
    itemKey: text('item_key').notNull(),
    readAt: createdAt(),
  },
  (table) => [primaryKey({ columns: [table.userId, table.itemKey] })],
);
