/**
 * What other features and the app may use from the review feature: its routes, and where a
 * version's review page and signed PDF live (mail links, the verification page).
 */
export { type AuditEventForWords, auditEventInWords } from './audit-plain-words.ts';
export { reviewPath, signedPdfPath } from './review-paths.ts';
export { reviewRoutes } from './review-routes.ts';
