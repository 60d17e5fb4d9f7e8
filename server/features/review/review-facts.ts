import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { currentAssignments } from './review-people.ts';
import type { ReviewFacts } from './review-policy.ts';
import type { ReviewVersion } from './review-version.ts';

/**
 * The facts the review policy (`review-policy.ts`) judges, gathered from the records. A session
 * user is an active account: `loadSessionUser` ends the session of a deactivated one at its next
 * request.
 */
export function reviewFacts(
  subject: ReviewVersion,
  actor: SessionUser,
  assignments: ReviewFacts['assignments'],
): ReviewFacts {
  return {
    actor: { id: actor.id, organisationId: actor.organisationId, roles: actor.roles, active: true },
    report: subject.report,
    version: subject.version,
    review: subject.review,
    assignments,
  };
}

/** The facts for returning or signing: the version as loaded, and who is assigned to its current round. */
export async function loadReviewFacts(
  db: Executor,
  subject: ReviewVersion,
  actor: SessionUser,
): Promise<ReviewFacts> {
  const { round } = subject.review;
  const assigned = await currentAssignments(db, subject.version.id, round);
  return reviewFacts(
    subject,
    actor,
    assigned.map((person) => ({ reviewerId: person.id, round })),
  );
}
