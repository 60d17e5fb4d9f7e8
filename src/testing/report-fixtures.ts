import {
  reportDetailSchema,
  reportFilterOptionsSchema,
  reportListResponseSchema,
} from '../../shared/api/reports.ts';

/** Answers of the report API for an organisation with two reports, checked with the shared schemas. */

const ana = { id: 3, fullName: 'Dr. Ana Ruiz' };
const ben = { id: 4, fullName: 'Ben Okafor' };
const study = { id: 7, title: 'Atorvastatin 20 mg long-term', product: 'Atorvastatin 20 mg tablets' };

export const filterOptions = reportFilterOptionsSchema.parse({
  studies: [{ id: study.id, title: study.title }],
  authors: [ana, ben],
});

const readyReport = {
  id: 5,
  reportNumber: 'RL-2026-0005',
  title: 'Shelf-life of batch B001',
  study,
  author: ana,
  createdAt: '2026-03-01T08:30:00.000Z',
  versionCount: 2,
  latest: {
    versionNumber: 2,
    renderStatus: 'ready',
    reviewState: 'in_review',
    pdfUrl: '/api/reports/5/versions/2/pdf',
  },
};

const failedReport = {
  id: 6,
  reportNumber: 'RL-2026-0006',
  title: 'Arrhenius extrapolation, B002',
  study,
  author: ben,
  createdAt: '2026-03-04T14:05:00.000Z',
  versionCount: 1,
  latest: { versionNumber: 1, renderStatus: 'failed', reviewState: 'draft', pdfUrl: null },
};

export const reportList = reportListResponseSchema.parse({
  items: [failedReport, readyReport],
  page: 1,
  pageSize: 20,
  total: 2,
  pageCount: 1,
});

export const failedReportList = reportListResponseSchema.parse({
  items: [failedReport],
  page: 1,
  pageSize: 20,
  total: 1,
  pageCount: 1,
});

export const readyReportDetail = reportDetailSchema.parse({
  ...readyReport,
  analysisRunId: 12,
  analysisUrl: '/analyses/12',
  versions: [1, 2].map((versionNumber) => ({
    versionNumber,
    analysisRunId: 12,
    templateVersionId: 1,
    templateVersionNumber: 1,
    paperSize: 'a4',
    renderStatus: 'ready',
    failureReason: null,
    pdfSha256: 'd'.repeat(64),
    pdfByteSize: 204_800,
    pageCount: 10,
    renderAttempts: 1,
    requestedBy: ana,
    createdAt: '2026-03-01T08:30:00.000Z',
    renderStartedAt: '2026-03-01T08:30:01.000Z',
    finishedAt: '2026-03-01T08:30:02.000Z',
    pdfUrl: `/api/reports/5/versions/${versionNumber}/pdf`,
    renditionUrl: `/api/reports/5/versions/${versionNumber}/rendition.pdf`,
    htmlUrl: `/api/reports/5/versions/${versionNumber}/html`,
    // Version 1 is signed; version 2, rendered after it, is in review (so v1 is not yet superseded).
    reviewState: versionNumber === 1 ? 'signed' : 'in_review',
    supersededBy: null,
    signedPdfSha256: versionNumber === 1 ? 'e'.repeat(64) : null,
  })),
});
