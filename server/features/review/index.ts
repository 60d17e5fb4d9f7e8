/** What other features and the app may use from the review feature. */

export { returnForRework } from './return-for-rework.ts';
export type { AuditContext, ReviewActionContext, ReviewTarget } from './review-action.ts';
export { reviewPageModel } from './review-page-model.ts';
export { reviewPath, signedPdfPath } from './review-paths.ts';
export { allAssignments, currentAssignments, reviewerCandidates } from './review-people.ts';
export * from './review-policy.ts';
export { returnedToMe, reviewQueue } from './review-queue.ts';
export { recordRefusal } from './review-refusals.ts';
export * from './review-routes.ts';
export { loadReviewVersion, type ReviewStanding, type ReviewVersion } from './review-version.ts';
export * from './signature-components.ts';
export { DEFAULT_SIGNATURE_MEANINGS, signatureMeanings } from './signature-meanings.ts';
export { signingLock } from './signing-lockout.ts';
export { submitForReview } from './submit-for-review.ts';
