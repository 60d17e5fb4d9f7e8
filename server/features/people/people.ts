import { asc, eq } from 'drizzle-orm';
import type { Role } from '../../platform/auth/roles.ts';
import type { Database } from '../../platform/db/client.ts';
import { memberships, users } from '../../platform/db/schema/index.ts';

export interface Person {
  id: number;
  fullName: string;
  email: string;
  active: boolean;
  lastSignInAt: Date | null;
  roles: Role[];
}

/** Members of an organisation with their roles there. */
export async function listPeople(db: Database, organisationId: number): Promise<Person[]> {
  const rows = await db
    .select({
      id: users.id,
      fullName: users.fullName,
      email: users.email,
      active: users.active,
      lastSignInAt: users.lastSignInAt,
      role: memberships.role,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.organisationId, organisationId))
    .orderBy(asc(users.fullName), asc(memberships.role));
  const people = new Map<number, Person>();
  for (const row of rows) {
    const person = people.get(row.id) ?? {
      id: row.id,
      fullName: row.fullName,
      email: row.email,
      active: row.active,
      lastSignInAt: row.lastSignInAt,
      roles: [],
    };
    person.roles.push(row.role as Role);
    people.set(row.id, person);
  }
  return [...people.values()];
}
