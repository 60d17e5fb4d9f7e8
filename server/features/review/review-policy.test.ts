import { describe, expect, it } from 'vitest';
import {
  chosenReviewersProblem,
  type Decision,
  decideReturn,
  decideSign,
  decideSubmit,
  type ReviewFacts,
  reviewPageOffers,
} from './review-policy.ts';

/**
 * The review policy against its rule sources: 21 CFR 11.10(g) (authority checks: organisation,
 * active account, role), 11.10(f) (the permitted sequence of states), and common practice for
 * segregation of duties and the current round. The 11.200 signature components are tested in
 * `signature-components.test.ts`.
 */

const AUTHOR = 1;
const RENDERER = 2;
const REVIEWER = 3;
const EARLIER_REVIEWER = 4;

type Overrides = {
  actor?: Partial<ReviewFacts['actor']>;
  report?: Partial<ReviewFacts['report']>;
  version?: Partial<ReviewFacts['version']>;
  review?: Partial<ReviewFacts['review']>;
  assignments?: ReviewFacts['assignments'];
};

/** Round 2 of a rendered version in review: REVIEWER assigned now, EARLIER_REVIEWER in round 1. */
function facts(overrides: Overrides = {}): ReviewFacts {
  return {
    actor: { id: REVIEWER, organisationId: 10, roles: ['reviewer'], active: true, ...overrides.actor },
    report: {
      id: 7,
      organisationId: 10,
      authorId: AUTHOR,
      reportNumber: 'RL-2026-0007',
      ...overrides.report,
    },
    version: {
      versionNumber: 1,
      requestedBy: RENDERER,
      renderStatus: 'ready',
      pdfSha256: 'a'.repeat(64),
      ...overrides.version,
    },
    review: { state: 'in_review', round: 2, ...overrides.review },
    assignments: overrides.assignments ?? [
      { reviewerId: EARLIER_REVIEWER, round: 1 },
      { reviewerId: REVIEWER, round: 1 },
      { reviewerId: REVIEWER, round: 2 },
    ],
  };
}

const author = (roles: ReviewFacts['actor']['roles'] = ['analyst', 'reviewer']) =>
  ({ id: AUTHOR, roles }) as const;

function refusal(decision: Decision) {
  if (decision.allowed) throw new Error('expected a refusal');
  return { reason: decision.reason, status: decision.status, auditAction: decision.auditAction };
}

describe('signing (11.10(g) authority checks; segregation of duties is common practice)', () => {
  it('the assigned reviewer of the current round may sign', () => {
    expect(decideSign(facts())).toEqual({ allowed: true });
  });

  it('the author may not sign their own work, whatever the state, and the attempt is recorded', () => {
    for (const state of ['draft', 'in_review', 'signed'] as const)
      expect(refusal(decideSign(facts({ actor: author(), review: { state } })))).toEqual({
        reason: 'own-work',
        status: 403,
        auditAction: 'signature.refused-own-report',
      });
  });

  it('whoever rendered the version counts as its author, even if assigned', () => {
    const renderer = facts({
      actor: { id: RENDERER },
      assignments: [{ reviewerId: RENDERER, round: 2 }],
    });
    expect(refusal(decideSign(renderer)).reason).toBe('own-work');
    expect(refusal(decideReturn(renderer)).reason).toBe('own-work');
  });

  it('a reviewer of an earlier round only may not act on the current round (common practice)', () => {
    const earlier = facts({ actor: { id: EARLIER_REVIEWER } });
    expect(refusal(decideSign(earlier))).toEqual({
      reason: 'not-assigned',
      status: 403,
      auditAction: 'signature.refused-not-assigned',
    });
    expect(refusal(decideReturn(earlier))).toEqual({
      reason: 'not-assigned',
      status: 403,
      auditAction: 'review.refused-not-assigned',
    });
  });

  it('an assigned person who no longer holds the reviewer role may not act', () => {
    const demoted = facts({ actor: { roles: ['analyst'] } });
    expect(refusal(decideSign(demoted)).reason).toBe('missing-role');
    expect(refusal(decideReturn(demoted)).reason).toBe('missing-role');
  });

  it('a deactivated reviewer may not act (recorded)', () => {
    const deactivated = facts({ actor: { active: false } });
    expect(refusal(decideSign(deactivated))).toMatchObject({ reason: 'account-deactivated', status: 403 });
    expect(refusal(decideReturn(deactivated)).auditAction).toBe('review.refused-deactivated');
  });

  it("another organisation's reviewer may not act, nor learn that the version exists (404)", () => {
    const outsider = facts({ actor: { organisationId: 11 } });
    for (const decide of [decideSign, decideReturn, decideSubmit])
      expect(refusal(decide(outsider))).toEqual({
        reason: 'other-organisation',
        status: 404,
        auditAction: null,
      });
  });

  it('only a rendered version in review may be signed (11.10(f) sequencing; not recorded)', () => {
    expect(refusal(decideSign(facts({ version: { renderStatus: 'rendering', pdfSha256: null } })))).toEqual({
      reason: 'not-rendered',
      status: 409,
      auditAction: null,
    });
    expect(refusal(decideSign(facts({ review: { state: 'signed' } }))).reason).toBe('already-signed');
    expect(refusal(decideSign(facts({ review: { state: 'returned' } }))).reason).toBe('wrong-state');
  });
});

describe('returning', () => {
  it('the assigned reviewer may return a version in review', () => {
    expect(decideReturn(facts())).toEqual({ allowed: true });
  });

  it('a version not in review cannot be returned, by anyone (409 before any authority check)', () => {
    const signed = refusal(
      decideReturn(facts({ actor: { id: EARLIER_REVIEWER }, review: { state: 'signed' } })),
    );
    expect(signed).toEqual({ reason: 'wrong-state', status: 409, auditAction: null });
  });
});

describe('submitting', () => {
  const draft = { review: { state: 'draft', round: 0 }, assignments: [] } as const;

  it('the author holding the analyst role submits a rendered draft or returned version', () => {
    expect(decideSubmit(facts({ ...draft, actor: author() }))).toEqual({ allowed: true });
    expect(decideSubmit(facts({ actor: author(), review: { state: 'returned' } }))).toEqual({
      allowed: true,
    });
  });

  it('nobody else may submit, not even whoever rendered the version', () => {
    expect(refusal(decideSubmit(facts({ ...draft, actor: { id: RENDERER, roles: ['analyst'] } })))).toEqual({
      reason: 'not-author',
      status: 403,
      auditAction: null,
    });
  });

  it('the author without the analyst role may not submit', () => {
    expect(refusal(decideSubmit(facts({ ...draft, actor: author(['reviewer']) }))).reason).toBe(
      'missing-role',
    );
  });

  it('a version in review, signed or not rendered cannot be submitted', () => {
    expect(refusal(decideSubmit(facts({ actor: author() }))).reason).toBe('wrong-state');
    expect(refusal(decideSubmit(facts({ actor: author(), review: { state: 'signed' } }))).reason).toBe(
      'wrong-state',
    );
    const failed = facts({ ...draft, actor: author(), version: { renderStatus: 'failed', pdfSha256: null } });
    expect(refusal(decideSubmit(failed))).toMatchObject({ reason: 'not-rendered', status: 409 });
  });

  it('the chosen reviewers must be eligible; choosing an author says so', () => {
    const eligible = new Set([REVIEWER, EARLIER_REVIEWER]);
    const authors = new Set([AUTHOR, RENDERER]);
    expect(chosenReviewersProblem([REVIEWER], eligible, authors)).toBeNull();
    expect(chosenReviewersProblem([REVIEWER, AUTHOR], eligible, authors)).toMatch(/your own report/);
    expect(chosenReviewersProblem([99], eligible, authors)).toMatch(/Choose reviewers from the list/);
  });
});

describe('what the review page offers is what the services allow', () => {
  it('the assigned reviewer sees the sign and return forms; the author sees why not', () => {
    expect(reviewPageOffers(facts())).toEqual({ canSubmit: false, canAct: true, authorTriesToSign: false });
    expect(reviewPageOffers(facts({ actor: author() }))).toEqual({
      canSubmit: false,
      canAct: false,
      authorTriesToSign: true,
    });
    expect(reviewPageOffers(facts({ actor: author(), review: { state: 'returned' } }))).toEqual({
      canSubmit: true,
      canAct: false,
      authorTriesToSign: false,
    });
  });
});
