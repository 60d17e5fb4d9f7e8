import { reviewStandingText } from '../../../shared/api/report-standing.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import { versionStandings } from '../reports/index.ts';
import { signFormChecklist } from './checklist-confirmation.ts';
import { organisationTimeZone } from './organisation-record.ts';
import { recordStamp, recordUnderReview } from './record-stamp.ts';
import type { ReviewTarget } from './review-action.ts';
import { reviewAuditTrail } from './review-audit-entries.ts';
import { reviewFacts } from './review-facts.ts';
import { loadAuthorName, loadRounds, loadSignatureList, loadSignedOutput } from './review-page-loaders.ts';
import { inlinePdfPath } from './review-paths.ts';
import { reviewerCandidates } from './review-people.ts';
import { authorsOf, isRendered, reviewPageOffers } from './review-policy.ts';
import { loadReviewRecord } from './review-record.ts';
import { loadReviewVersion, type ReviewVersion } from './review-version.ts';
import { needsBothSignatureComponents } from './signature-components.ts';
import { signatureMeanings } from './signature-meanings.ts';
import type { SigningSession } from './signing-context.ts';
import { signingLock } from './signing-lockout.ts';
import { type VersionChanges, versionChanges } from './version-changes.ts';

const STATE_WORDS = {
  draft: 'Draft',
  in_review: 'In review',
  returned: 'Returned',
  signed: 'Signed',
} as const;

const NOT_LOCKED = { locked: false, until: null };

function versionView({ report, version }: ReviewVersion) {
  const ready = isRendered(version);
  const base = `/api/reports/${report.id}/versions/${version.versionNumber}`;
  return {
    number: version.versionNumber,
    renderStatus: version.renderStatus,
    ready,
    pdfSha256: version.pdfSha256,
    pdfUrl: ready ? `${base}/rendition.pdf` : null,
    inlinePdfUrl: ready ? inlinePdfPath(report.id, version.versionNumber) : null,
    htmlUrl: ready ? `${base}/html` : null,
  };
}

/** The changes since the previous version or round, with the flags the page tests. */
function changesView(changes: VersionChanges) {
  return {
    ...changes,
    hasPrevious: changes.previousNumber !== null,
    changedResults: changes.results.filter((row) => row.changed),
    sameResultCount: changes.results.filter((row) => !row.changed).length,
  };
}

function reviewView({ review }: ReviewVersion, supersededBy: number | null) {
  return {
    state: review.state,
    stateText: STATE_WORDS[review.state],
    standingText: reviewStandingText(supersededBy === null ? review.state : 'superseded', supersededBy),
    supersededBy,
    round: review.round,
    lastComment: review.lastComment,
    returned: review.state === 'returned',
    signed: review.state === 'signed',
    inReview: review.state === 'in_review',
  };
}

/**
 * Everything the review page shows and offers to `actor` for one version. Reads only, in three
 * steps: the version, then what depends on it, then what depends on the policy's answer (the
 * reviewer choice and the signing lock); the reads of one step run at the same time.
 */
export async function reviewPageModel(options: {
  db: Executor;
  actor: SessionUser;
  target: ReviewTarget;
  session: SigningSession;
}) {
  const { db, actor, target, session } = options;
  const [subject, timeZone, meanings] = await Promise.all([
    loadReviewVersion(db, actor.organisationId, target),
    organisationTimeZone(db, actor.organisationId),
    signatureMeanings(db, actor.organisationId),
  ]);
  const { report, version, review } = subject;
  const [rounds, signatureList, signedOutput, authorName, standings, record, changes, underReview] =
    await Promise.all([
      loadRounds(db, version.id, review.round),
      loadSignatureList(db, version.id),
      loadSignedOutput(db, version),
      loadAuthorName(db, report.authorId),
      versionStandings(db, report.id),
      loadReviewRecord(db, version, actor.organisationId, review.round),
      versionChanges(db, version, review.round),
      recordUnderReview(db, subject),
    ]);
  const offers = reviewPageOffers(reviewFacts(subject, actor, rounds.assignments));
  const [candidates, lock, auditTrail, stamp, checklist] = await Promise.all([
    offers.canSubmit ? reviewerCandidates(db, actor.organisationId, authorsOf(subject)) : [],
    offers.canAct ? signingLock(db, actor.id) : NOT_LOCKED,
    reviewAuditTrail(db, underReview, timeZone),
    recordStamp(db, subject, underReview),
    signFormChecklist(db, actor.organisationId),
  ]);
  return {
    report: { id: report.id, number: report.reportNumber, title: report.title, author: authorName },
    version: versionView(subject),
    review: reviewView(subject, standings.get(version.versionNumber)?.supersededBy ?? null),
    assigned: rounds.current.map((person) => ({ ...person, isMe: person.id === actor.id })),
    rounds: rounds.history,
    isAuthor: report.authorId === actor.id,
    ...offers,
    candidates,
    meanings,
    needsIdentity: needsBothSignatureComponents(session),
    lock,
    timeZone,
    signatures: signatureList,
    signedOutput,
    record,
    changes: changesView(changes),
    auditTrail,
    recordStamp: stamp,
    checklist,
  };
}
