import type { RenderStatus } from '../../../shared/api/reports.ts';
import type { ReviewState } from '../../../shared/api/review.ts';
import type { Role } from '../../platform/auth/roles.ts';

/**
 * Who may act on a report version's review, written once. Pure functions: they take the facts
 * (who is asking, whose report it is, where the review stands, who is assigned) and return a
 * decision with its reason. The services enforce the decisions and the review page shows only
 * what they allow, so the page and the server cannot drift apart.
 *
 *   draft ──submit──▶ in_review ──sign──▶ signed (final, locked by a trigger)
 *                         │
 *                         └──return (comment)──▶ returned ──submit──▶ in_review (next round)
 *
 * Rule sources (21 CFR Part 11, paraphrased from memory; the regulation is not held in this
 * repository):
 * - 11.10(g), authority checks: only authorised individuals may use the system, sign a record or
 *   perform the operation at hand — hence the same organisation, an active account, the role the
 *   step needs.
 * - 11.10(f), operational checks: steps happen in the permitted sequence — hence the states above.
 * - 11.200(a), signature components: checked once the authority checks pass
 *   (`signature-components.ts`).
 * - Common practice (segregation of duties, not in Part 11 itself): nobody reviews or signs their
 *   own work — neither the report's author nor whoever rendered the version. Only a reviewer the
 *   author assigned to the *current* round may return or sign (a reviewer of an earlier round was
 *   not asked to review this submission).
 */

export interface ReviewFacts {
  /** The person asking. */
  actor: { id: number; organisationId: number; roles: readonly Role[]; active: boolean };
  report: { id: number; organisationId: number; authorId: number; reportNumber: string };
  version: {
    versionNumber: number;
    requestedBy: number;
    renderStatus: RenderStatus;
    pdfSha256: string | null;
  };
  review: { state: ReviewState; round: number };
  /** Reviewers assigned to the version, in any round (only the current round counts). */
  assignments: readonly { reviewerId: number; round: number }[];
}

export type RefusalReason =
  | 'other-organisation'
  | 'account-deactivated'
  | 'own-work'
  | 'not-author'
  | 'missing-role'
  | 'not-assigned'
  | 'not-rendered'
  | 'already-signed'
  | 'wrong-state';

export interface Refusal {
  allowed: false;
  reason: RefusalReason;
  status: 403 | 404 | 409;
  /** Safe to show to the person. */
  message: string;
  /**
   * The audit action under which the attempt is recorded, when it matters for accountability
   * (someone tried to act on a record they may not); null for a refusal of the wrong moment.
   */
  auditAction: string | null;
}

export type Decision = { allowed: true } | Refusal;

const ALLOWED: Decision = { allowed: true };

/** Who authored a version: the report's author and whoever rendered the version. */
export function authorsOf(facts: {
  report: { authorId: number };
  version: { requestedBy: number };
}): Set<number> {
  return new Set([facts.report.authorId, facts.version.requestedBy]);
}

/** Rendered, with the PDF a reviewer reads (a database check makes `ready` imply the hash). */
export function isRendered(version: ReviewFacts['version']): boolean {
  return version.renderStatus === 'ready' && version.pdfSha256 !== null;
}

/** The state as a sentence says it: `in_review` → "in review". */
export function stateInWords(state: ReviewState): string {
  return state.replace('_', ' ');
}

function isAssignedToCurrentRound(facts: ReviewFacts): boolean {
  const { round } = facts.review;
  return (
    round > 0 &&
    facts.assignments.some(
      (assignment) => assignment.round === round && assignment.reviewerId === facts.actor.id,
    )
  );
}

function refusal(
  reason: RefusalReason,
  status: Refusal['status'],
  message: string,
  auditAction: string | null = null,
): Refusal {
  return { allowed: false, reason, status, message, auditAction };
}

/** The organisation and account checks every step starts with (11.10(g)). */
function accessProblem(facts: ReviewFacts, auditPrefix: string): Refusal | null {
  if (facts.actor.organisationId !== facts.report.organisationId)
    return refusal(
      'other-organisation',
      404,
      `Report ${facts.report.id} has no version ${facts.version.versionNumber} in your organisation.`,
    );
  if (!facts.actor.active)
    return refusal(
      'account-deactivated',
      403,
      'This account is deactivated: it may not act on a review.',
      `${auditPrefix}.refused-deactivated`,
    );
  return null;
}

/** Whether a reviewer of this version may return or sign it, apart from its state (11.10(g)). */
function reviewerProblem(facts: ReviewFacts): RefusalReason | null {
  if (authorsOf(facts).has(facts.actor.id)) return 'own-work';
  if (!facts.actor.roles.includes('reviewer')) return 'missing-role';
  if (!isAssignedToCurrentRound(facts)) return 'not-assigned';
  return null;
}

/** May the actor submit this version for review (a new round)? */
export function decideSubmit(facts: ReviewFacts): Decision {
  const { report, version, review } = facts;
  const access = accessProblem(facts, 'review');
  if (access) return access;
  if (report.authorId !== facts.actor.id)
    return refusal(
      'not-author',
      403,
      `Only the report's author may submit ${report.reportNumber} for review.`,
    );
  if (!facts.actor.roles.includes('analyst'))
    return refusal(
      'missing-role',
      403,
      `Only a member holding the analyst role may submit ${report.reportNumber} for review.`,
    );
  if (!isRendered(version))
    return refusal(
      'not-rendered',
      409,
      `Version ${version.versionNumber} is ${version.renderStatus}; only a rendered version can be reviewed.`,
    );
  if (review.state !== 'draft' && review.state !== 'returned')
    return refusal(
      'wrong-state',
      409,
      `Version ${version.versionNumber} is ${stateInWords(review.state)}; it cannot be submitted again.`,
    );
  return ALLOWED;
}

/** May the actor return this version to its author? Refusals of a reviewer are recorded. */
export function decideReturn(facts: ReviewFacts): Decision {
  const { version, review } = facts;
  const access = accessProblem(facts, 'review');
  if (access) return access;
  if (review.state !== 'in_review')
    return refusal(
      'wrong-state',
      409,
      `Version ${version.versionNumber} is ${stateInWords(review.state)}, not in review; it cannot be returned.`,
    );
  const problem = reviewerProblem(facts);
  if (problem)
    return refusal(
      problem,
      403,
      'Only a reviewer assigned to this round may return the report.',
      'review.refused-not-assigned',
    );
  return ALLOWED;
}

/**
 * May the actor sign this version? An author's attempt is refused first, whatever the state, and
 * recorded under its own action; so is a reviewer's who is not assigned to the current round.
 * The signing lock and the signature components are checked after this (`signing-checks.ts`).
 */
export function decideSign(facts: ReviewFacts): Decision {
  const { report, version, review } = facts;
  const access = accessProblem(facts, 'signature');
  if (access) return access;
  if (authorsOf(facts).has(facts.actor.id))
    return refusal(
      'own-work',
      403,
      'You cannot sign a report you authored: segregation of duties needs another person to review it.',
      'signature.refused-own-report',
    );
  if (!isRendered(version))
    return refusal(
      'not-rendered',
      409,
      `Version ${version.versionNumber} is ${version.renderStatus}; only a rendered version can be signed.`,
    );
  if (review.state === 'signed')
    return refusal(
      'already-signed',
      409,
      `${report.reportNumber} version ${version.versionNumber} is already signed and locked; a correction is a new version.`,
    );
  if (review.state !== 'in_review')
    return refusal(
      'wrong-state',
      409,
      `Version ${version.versionNumber} is ${stateInWords(review.state)}, not in review; it cannot be signed now.`,
    );
  const problem = reviewerProblem(facts);
  if (problem)
    return refusal(
      problem,
      403,
      'Only a reviewer assigned to this round may sign the report.',
      'signature.refused-not-assigned',
    );
  return ALLOWED;
}

/** What the review page offers the actor: the same decisions the services enforce. */
export function reviewPageOffers(facts: ReviewFacts) {
  const inReview = isRendered(facts.version) && facts.review.state === 'in_review';
  return {
    canSubmit: decideSubmit(facts).allowed,
    canAct: decideSign(facts).allowed && decideReturn(facts).allowed,
    authorTriesToSign: inReview && authorsOf(facts).has(facts.actor.id),
  };
}

/**
 * Why the reviewers an author chose cannot all be assigned, or null when they can. `eligibleIds`
 * are the organisation's active members holding the reviewer role, authors left out.
 */
export function chosenReviewersProblem(
  chosenIds: readonly number[],
  eligibleIds: ReadonlySet<number>,
  authors: ReadonlySet<number>,
): string | null {
  const unknown = chosenIds.filter((id) => !eligibleIds.has(id));
  if (unknown.length === 0) return null;
  return unknown.some((id) => authors.has(id))
    ? 'You cannot review your own report: choose another reviewer.'
    : 'Choose reviewers from the list (members holding the reviewer role).';
}
