import { integer, pgEnum, pgTable, serial, unique } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/** The three duties of the product. A user may hold several, separately in each organisation. */
export const roleEnum = pgEnum('role', ['analyst', 'reviewer', 'admin']);

export const memberships = pgTable(
  'memberships',
  {
    id: serial('id').primaryKey(),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    role: roleEnum('role').notNull(),
    createdAt: createdAt(),
  },
  (table) => [unique('memberships_user_org_role').on(table.userId, table.organisationId, table.role)],
);
