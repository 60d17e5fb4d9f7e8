import { z } from 'zod';
import { reviewStandingSchema } from './report-standing.ts';

/**
 * The boundary of reports: creating a report from an analysis run, rendering a new version, the
 * paginated report history and one report with its versions. One schema per boundary, used by
 * the server to validate and by the report-history island to type and check its calls.
 */

export const PAPER_SIZES = ['a4', 'letter'] as const;
export const RENDER_STATUSES = ['queued', 'rendering', 'ready', 'failed'] as const;
export const MAX_REPORT_TITLE_LENGTH = 200;
export const MAX_PAGE_SIZE = 100;
export const DEFAULT_PAGE_SIZE = 20;

export const paperSizeSchema = z.enum(PAPER_SIZES, { error: 'Choose A4 or US Letter.' });
export type PaperSize = z.infer<typeof paperSizeSchema>;
export const renderStatusSchema = z.enum(RENDER_STATUSES);
export type RenderStatus = z.infer<typeof renderStatusSchema>;

const titleSchema = z
  .string()
  .trim()
  .max(MAX_REPORT_TITLE_LENGTH, `Keep the title under ${MAX_REPORT_TITLE_LENGTH} characters.`);

/** POST /api/analyses/:runId/reports (JSON) and POST /analyses/:runId/reports (the page form). */
/** Temperature-log assessments printed in the version as excursion assessments, in this order. */
const temperatureLogIdsSchema = z
  .array(z.coerce.number().int().positive())
  .max(10, 'At most 10 temperature-log assessments can be attached to one report version.')
  .refine((ids) => new Set(ids).size === ids.length, 'Each assessment can be attached once.');

export const createReportRequestSchema = z.object({
  /** Blank or missing: "<study title> — kinetics report". */
  title: titleSchema.optional(),
  paperSize: paperSizeSchema.default('a4'),
  temperatureLogIds: temperatureLogIdsSchema.default([]),
});
export type CreateReportRequest = z.input<typeof createReportRequestSchema>;

/** POST /api/reports/:id/versions: render again, by default from the latest version's run. */
export const createReportVersionRequestSchema = z.object({
  paperSize: paperSizeSchema.optional(),
  /** A later run of the same study (after an exclusion, say); default: the latest version's run. */
  analysisRunId: z.coerce.number().int().positive().optional(),
  /** Default: the latest version's attachments. */
  temperatureLogIds: temperatureLogIdsSchema.optional(),
});
export type CreateReportVersionRequest = z.input<typeof createReportVersionRequestSchema>;

export const createReportResponseSchema = z.object({
  reportId: z.number().int(),
  reportNumber: z.string(),
  versionNumber: z.number().int(),
  renderStatus: renderStatusSchema,
});
export type CreateReportResponse = z.infer<typeof createReportResponseSchema>;

const optionalId = z.preprocess(
  (raw) => (raw === '' || raw === undefined ? undefined : raw),
  z.coerce.number({ error: 'Choose from the list.' }).int().positive().optional(),
);
const DAY = /^\d{4}-\d{2}-\d{2}$/;
const optionalDay = (label: string) =>
  z.preprocess(
    (raw) => (raw === '' || raw === undefined ? undefined : raw),
    z.string().regex(DAY, `${label} must be a date written YYYY-MM-DD.`).optional(),
  );

/**
 * GET /api/reports — the organisation's reports, newest first, a page at a time. `status` is the
 * state of each report's latest version; `from`/`to` are calendar days (inclusive) of creation
 * in UTC.
 */
export const reportListQuerySchema = z
  .object({
    page: z.coerce.number().int().min(1).default(1),
    pageSize: z.coerce.number().int().min(1).max(MAX_PAGE_SIZE).default(DEFAULT_PAGE_SIZE),
    status: z.preprocess((raw) => (raw === '' ? undefined : raw), renderStatusSchema.optional()),
    /** The review standing of each report's latest version. */
    review: z.preprocess((raw) => (raw === '' ? undefined : raw), reviewStandingSchema.optional()),
    studyId: optionalId,
    authorId: optionalId,
    from: optionalDay('From'),
    to: optionalDay('To'),
    /** Retired reports are left out unless asked for ("include retired"). */
    includeRetired: z.preprocess(
      (raw) => (raw === undefined || raw === '' ? undefined : raw === true || raw === '1' || raw === 'true'),
      z.boolean().optional(),
    ),
  })
  .refine((query) => !query.from || !query.to || query.from <= query.to, {
    message: '"From" must not be after "To".',
    path: ['from'],
  });
export type ReportListQuery = z.infer<typeof reportListQuerySchema>;
export type ReportListQueryInput = z.input<typeof reportListQuerySchema>;

export const personSchema = z.object({ id: z.number().int(), fullName: z.string() });

export const reportVersionSummarySchema = z.object({
  versionNumber: z.number().int(),
  analysisRunId: z.number().int(),
  templateVersionId: z.number().int(),
  templateVersionNumber: z.number().int(),
  paperSize: paperSizeSchema,
  renderStatus: renderStatusSchema,
  failureReason: z.string().nullable(),
  pdfSha256: z.string().nullable(),
  pdfByteSize: z.number().int().nullable(),
  pageCount: z.number().int().nullable(),
  renderAttempts: z.number().int(),
  requestedBy: personSchema,
  createdAt: z.string(),
  renderStartedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  /** The version's PDF: the sealed one once signed, else the rendition. */
  pdfUrl: z.string().nullable(),
  /** The rendered (unsigned) PDF, always under its own label. */
  renditionUrl: z.string().nullable(),
  htmlUrl: z.string().nullable(),
  reviewState: reviewStandingSchema,
  /** The later version whose signature superseded this signed one. */
  supersededBy: z.number().int().nullable(),
  signedPdfSha256: z.string().nullable(),
});
export type ReportVersionSummary = z.infer<typeof reportVersionSummarySchema>;

export const reportListItemSchema = z.object({
  id: z.number().int(),
  reportNumber: z.string(),
  title: z.string(),
  study: z.object({ id: z.number().int(), title: z.string(), product: z.string() }),
  author: personSchema,
  createdAt: z.string(),
  versionCount: z.number().int(),
  /** Whether the report was retired (listed only with "include retired"). */
  retired: z.boolean().optional(),
  latest: z.object({
    versionNumber: z.number().int(),
    renderStatus: renderStatusSchema,
    reviewState: reviewStandingSchema,
    pdfUrl: z.string().nullable(),
  }),
});
export type ReportListItem = z.infer<typeof reportListItemSchema>;

export const reportListResponseSchema = z.object({
  items: z.array(reportListItemSchema),
  page: z.number().int(),
  pageSize: z.number().int(),
  total: z.number().int(),
  pageCount: z.number().int(),
});
export type ReportListResponse = z.infer<typeof reportListResponseSchema>;

/** GET /api/reports/filter-options: what the list's drop-downs offer. */
export const reportFilterOptionsSchema = z.object({
  studies: z.array(z.object({ id: z.number().int(), title: z.string() })),
  authors: z.array(personSchema),
});
export type ReportFilterOptions = z.infer<typeof reportFilterOptionsSchema>;

/** GET /api/reports/:id */
export const reportDetailSchema = reportListItemSchema.omit({ latest: true }).extend({
  analysisRunId: z.number().int(),
  analysisUrl: z.string(),
  versions: z.array(reportVersionSummarySchema),
  /** The study version the latest version's analysis was computed against. */
  studyVersion: z.number().int().nullable().optional(),
  /** One sentence per study version recorded since ("lower limit 95 → 90, on …, by …, reason: …"). */
  studyChangedSince: z.array(z.string()).optional(),
  /** Set once the report is retired (server/features/retirement). */
  retirement: z
    .object({ reason: z.string(), retiredAt: z.string(), retiredBy: z.string() })
    .nullable()
    .optional(),
});
export type ReportDetail = z.infer<typeof reportDetailSchema>;

export const reportIdParamSchema = z.object({ id: z.coerce.number().int().positive() });
export const runIdParamSchema = z.object({ runId: z.coerce.number().int().positive() });
export const reportVersionParamSchema = z.object({
  id: z.coerce.number().int().positive(),
  version: z.coerce.number().int().positive(),
});

/** Where a version's outputs are served; the island and the server build links the same way. */
export const reportPdfUrl = (reportId: number, versionNumber: number) =>
  `/api/reports/${reportId}/versions/${versionNumber}/pdf`;
export const reportHtmlUrl = (reportId: number, versionNumber: number) =>
  `/api/reports/${reportId}/versions/${versionNumber}/html`;
