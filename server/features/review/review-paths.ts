/** Where a version's review page lives; mail links, the queue and the verification page point here. */
export const reviewPath = (reportId: number, versionNumber: number) =>
  `/review/reports/${reportId}/versions/${versionNumber}`;

/** The download of a version's newest signed PDF. */
export const signedPdfPath = (reportId: number, versionNumber: number) =>
  `${reviewPath(reportId, versionNumber)}/signed.pdf`;

/** The rendered PDF under review, served inline for the review page's viewer. */
export const inlinePdfPath = (reportId: number, versionNumber: number) =>
  `${reviewPath(reportId, versionNumber)}/under-review.pdf`;
