import { and, asc, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { memberships, reviewAssignments, users } from '../../platform/db/schema/index.ts';

/** A person as the review forms and messages name them. */
export interface Reviewer {
  id: number;
  fullName: string;
  email: string;
}

/** Reviewers assigned to the version's current round, with their names. */
export async function currentAssignments(
  db: Executor,
  versionId: number,
  round: number,
): Promise<Reviewer[]> {
  if (round === 0) return [];
  return db
    .select({ id: users.id, fullName: users.fullName, email: users.email })
    .from(reviewAssignments)
    .innerJoin(users, eq(users.id, reviewAssignments.reviewerId))
    .where(and(eq(reviewAssignments.reportVersionId, versionId), eq(reviewAssignments.round, round)))
    .orderBy(asc(users.fullName));
}

/** Every round's reviewers of a version, by round and name. */
export async function allAssignments(db: Executor, versionId: number) {
  return db
    .select({ round: reviewAssignments.round, id: users.id, fullName: users.fullName, email: users.email })
    .from(reviewAssignments)
    .innerJoin(users, eq(users.id, reviewAssignments.reviewerId))
    .where(eq(reviewAssignments.reportVersionId, versionId))
    .orderBy(asc(reviewAssignments.round), asc(users.fullName));
}

/** Active members of the organisation with the reviewer role, other than `excluded`. */
export async function reviewerCandidates(
  db: Executor,
  organisationId: number,
  excluded: ReadonlySet<number>,
): Promise<Reviewer[]> {
  const rows = await db
    .selectDistinct({ id: users.id, fullName: users.fullName, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, organisationId),
        eq(memberships.role, 'reviewer'),
        eq(users.active, true),
      ),
    )
    .orderBy(asc(users.fullName), asc(users.id));
  return rows.filter((row) => !excluded.has(row.id));
}

/** A person's name and address, or a placeholder for an id that names nobody. */
export async function personName(db: Executor, userId: number) {
  const [row] = await db
    .select({ fullName: users.fullName, email: users.email })
    .from(users)
    .where(eq(users.id, userId));
  return row ?? { fullName: `user ${userId}`, email: '' };
}
