import { index, integer, pgEnum, pgTable, serial, text, timestamp, unique } from 'drizzle-orm/pg-core';
import { analysisRuns } from './analysis-runs.ts';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { reportTemplateVersions } from './report-templates.ts';
import { studies } from './studies.ts';
import { users } from './users.ts';

export const paperSizeEnum = pgEnum('paper_size', ['a4', 'letter']);

/** queued → rendering → ready | failed. `ready` and `failed` are final (a trigger enforces it). */
export const renderStatusEnum = pgEnum('render_status', ['queued', 'rendering', 'ready', 'failed']);

/**
 * A report: the organisation's formatted record of one analysis, known by its report number
 * (`RL-2026-0001`, unique per organisation, allocated in the creating transaction). Write-once;
 * every render is a row of `report_versions`.
 */
export const reports = pgTable(
  'reports',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    studyId: integer('study_id')
      .notNull()
      .references(() => studies.id),
    /** The analysis run the report was created from (versions may cite later runs). */
    analysisRunId: integer('analysis_run_id')
      .notNull()
      .references(() => analysisRuns.id),
    reportNumber: text('report_number').notNull(),
    title: text('title').notNull(),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (table) => [
    unique('reports_org_number').on(table.organisationId, table.reportNumber),
    index('reports_org_created').on(table.organisationId, table.createdAt),
  ],
);

/**
 * One render of a report: which analysis run and template version went in, the exact HTML and
 * the PDF's SHA-256 (the file itself is stored content-addressed under REPORTS_DIR). Once the
 * version is `ready` or `failed` the row never changes again; a new render is a new version.
 */
export const reportVersions = pgTable(
  'report_versions',
  {
    id: serial('id').primaryKey(),
    reportId: integer('report_id')
      .notNull()
      .references(() => reports.id),
    versionNumber: integer('version_number').notNull(),
    analysisRunId: integer('analysis_run_id')
      .notNull()
      .references(() => analysisRuns.id),
    templateVersionId: integer('template_version_id')
      .notNull()
      .references(() => reportTemplateVersions.id),
    paperSize: paperSizeEnum('paper_size').notNull().default('a4'),
    renderStatus: renderStatusEnum('render_status').notNull().default('queued'),
    /** Why the render failed, written for the person reading the report history. */
    failureReason: text('failure_reason'),
    html: text('html'),
    pdfSha256: text('pdf_sha256'),
    pdfByteSize: integer('pdf_byte_size'),
    pageCount: integer('page_count'),
    /** The pg-boss job that renders this version. */
    jobId: text('job_id'),
    renderAttempts: integer('render_attempts').notNull().default(0),
    requestedBy: integer('requested_by')
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    renderStartedAt: timestamp('render_started_at', { withTimezone: true, mode: 'date' }),
    /** When the version became ready or failed. */
    finishedAt: timestamp('finished_at', { withTimezone: true, mode: 'date' }),
    updatedAt: updatedAt(),
  },
  (table) => [
    unique('report_versions_number').on(table.reportId, table.versionNumber),
    index('report_versions_status').on(table.renderStatus),
  ],
);
