import { z } from 'zod';

/**
 * Where a report version stands in review, as every list and page shows it beside its render
 * state. The workflow row (`report_reviews`) knows draft, in review, returned and signed; a signed
 * version is shown as *superseded* once a later version of the same report is signed too (not
 * before: an unsigned newer rendering does not replace a signed record, 21 CFR 11.10(e)).
 */
export const REVIEW_STANDINGS = ['draft', 'in_review', 'returned', 'signed', 'superseded'] as const;
export const reviewStandingSchema = z.enum(REVIEW_STANDINGS);
export type ReviewStandingName = z.infer<typeof reviewStandingSchema>;

export const REVIEW_STANDING_LABELS: Record<ReviewStandingName, string> = {
  draft: 'Draft',
  in_review: 'In review',
  returned: 'Returned',
  signed: 'Signed',
  superseded: 'Superseded',
};

/** "Signed", "Superseded by v3", … — the words shown for a version's review standing. */
export function reviewStandingText(standing: ReviewStandingName, supersededBy: number | null): string {
  return standing === 'superseded' && supersededBy !== null
    ? `Superseded by v${supersededBy}`
    : REVIEW_STANDING_LABELS[standing];
}

/**
 * The standing from the workflow state (null: never submitted, a draft) and the lowest later
 * version of the report that is signed (null: none).
 */
export function reviewStandingOf(
  workflowState: 'draft' | 'in_review' | 'returned' | 'signed' | null,
  laterSignedVersion: number | null,
): ReviewStandingName {
  if (workflowState === 'signed') return laterSignedVersion === null ? 'signed' : 'superseded';
  return workflowState ?? 'draft';
}

/** Where a version's rendered (unsigned) PDF is served; `reportPdfUrl` is the signed one once signed. */
export const reportRenditionUrl = (reportId: number, versionNumber: number) =>
  `/api/reports/${reportId}/versions/${versionNumber}/rendition.pdf`;
