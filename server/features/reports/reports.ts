import { and, eq, inArray, max, sql } from 'drizzle-orm';
import type {
  CreateReportRequest,
  CreateReportVersionRequest,
  PaperSize,
} from '../../../shared/api/reports.ts';
import { createReportRequestSchema, createReportVersionRequestSchema } from '../../../shared/api/reports.ts';
import {
  DEFAULT_REPORT_NUMBER_FORMAT,
  parseReportNumberFormat,
  reportNumberFrame,
} from '../../../shared/api/settings.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  organisationSettings,
  organisations,
  reports,
  reportVersions,
  reportVersionTemperatureLogs,
  temperatureLogAssessments,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { getAnalysisRun } from '../analysis/index.ts';
import { assertNotRetired } from '../retirement/index.ts';
import type { RenderQueue } from './queue/render-queue.ts';
import { templateVersionForNewReports } from './report-templates.ts';

/**
 * Creating reports and report versions. Each runs in one transaction: the report number is
 * allocated, the report and its version are inserted, the render job is sent through the same
 * transaction and the audit events are appended — so either all of it exists or none of it.
 *
 * Report numbers follow the organisation's format (settings; default `RL-{YYYY}-{NNNN}`, e.g.
 * `RL-2026-0001`): the year of the database clock in the organisation's time zone, the sequence
 * counting that organisation's reports of the year, as many digits as the format has N at least.
 * Allocation takes an advisory lock per organisation, so two reports created at once never get
 * one number (the unique constraint would refuse it anyway).
 *
 * Reading (the history list, one report, its outputs) is in `report-history.ts`.
 */

const REPORT_NUMBER_LOCK = 7_305_021;

import type { AuditContext } from '../../platform/audit/audit-context.ts';

export type { AuditContext };

export interface CreatedReport {
  reportId: number;
  reportNumber: string;
  versionId: number;
  versionNumber: number;
  jobId: string;
}

/** Allocates the next report number of the organisation inside `tx`. */
export async function allocateReportNumber(tx: Executor, organisationId: number): Promise<string> {
  await tx.execute(sql`select pg_advisory_xact_lock(${REPORT_NUMBER_LOCK}, ${organisationId})`);
  return nextReportNumber(tx, organisationId);
}

const escapeRegex = (text: string) => text.replace(/[.*+?^${}()|[\]\\-]/g, '\\$&');

/**
 * The number the organisation's next report gets, in its format (`organisation_settings.
 * report_number_format`, `RL-{YYYY}-{NNNN}` when no settings row exists), or in `format` when
 * given (a preview of an unsaved format). The sequence is one above the highest among the
 * organisation's numbers that fit the format for this year (or ever, when the format has no
 * year), so a number is never given twice. Only `allocateReportNumber` holds the lock that makes
 * it final; called directly it is a preview.
 */
export async function nextReportNumber(
  executor: Executor,
  organisationId: number,
  format?: string,
): Promise<string> {
  const [clock] = await executor
    .select({
      year: sql<string>`to_char(now() at time zone ${organisations.timeZone}, 'YYYY')`,
      format: organisationSettings.reportNumberFormat,
    })
    .from(organisations)
    .leftJoin(organisationSettings, eq(organisationSettings.organisationId, organisations.id))
    .where(eq(organisations.id, organisationId));
  if (!clock) throw new HttpError(404, 'Your organisation was not found.');
  const chosen = format ?? clock.format ?? DEFAULT_REPORT_NUMBER_FORMAT;
  if (!parseReportNumberFormat(chosen).ok)
    throw new HttpError(
      409,
      `The report number format "${chosen}" is not usable; an administrator must correct it in the settings.`,
    );
  const frame = reportNumberFrame(chosen, clock.year);
  const pattern = `^${escapeRegex(frame.prefix)}([0-9]+)${escapeRegex(frame.suffix)}$`;
  const [last] = await executor
    .select({
      sequence: sql<string | null>`max(substring(${reports.reportNumber} from ${pattern})::numeric)::text`,
    })
    .from(reports)
    .where(and(eq(reports.organisationId, organisationId), sql`${reports.reportNumber} ~ ${pattern}`));
  const next = Number(last?.sequence ?? 0) + 1;
  return `${frame.prefix}${String(next).padStart(frame.width, '0')}${frame.suffix}`;
}

/**
 * Creates a report from an analysis run with version 1 queued for rendering.
 * Throws HttpError 404 when the run is not in the caller's organisation, 400 for a bad request.
 */
export async function createReport(
  db: Database,
  queue: RenderQueue,
  actor: SessionUser,
  runId: number,
  request: CreateReportRequest,
  context: AuditContext,
): Promise<CreatedReport> {
  const input = createReportRequestSchema.parse(request);
  return db.transaction(async (tx) => {
    const run = await getAnalysisRun(tx, actor.organisationId, runId);
    await assertNotRetired(tx, actor.organisationId, 'analysis_run', runId);
    const title = input.title?.trim() || `${run.study.title} — kinetics report`;
    const reportNumber = await allocateReportNumber(tx, actor.organisationId);
    const [report] = await tx
      .insert(reports)
      .values({
        organisationId: actor.organisationId,
        studyId: run.studyId,
        analysisRunId: run.id,
        reportNumber,
        title,
        authorId: actor.id,
      })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'report.created',
      recordType: 'report',
      recordId: report!.id,
      after: { reportNumber, title, studyId: run.studyId, analysisRunId: run.id },
      context,
    });
    const version = await insertVersion(tx, queue, actor, report!, {
      versionNumber: 1,
      analysisRunId: run.id,
      paperSize: input.paperSize,
      temperatureLogIds: input.temperatureLogIds,
      context,
    });
    return { reportId: report!.id, reportNumber, ...version };
  });
}

/**
 * Renders a report again as a new version (the earlier versions and their PDFs stay). By default
 * from the latest version's analysis run and paper size, with the template published now.
 * Throws HttpError 404 (report or run not in the organisation) or 409 (run of another study).
 */
export async function createReportVersion(
  db: Database,
  queue: RenderQueue,
  actor: SessionUser,
  reportId: number,
  request: CreateReportVersionRequest,
  context: AuditContext,
): Promise<CreatedReport> {
  const input = createReportVersionRequestSchema.parse(request);
  return db.transaction(async (tx) => {
    const [report] = await tx
      .select()
      .from(reports)
      .where(and(eq(reports.id, reportId), eq(reports.organisationId, actor.organisationId)))
      .for('update');
    if (!report) throw new HttpError(404, `There is no report ${reportId} in your organisation.`);
    const [latest] = await tx
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.reportId, report.id))
      .orderBy(sql`${reportVersions.versionNumber} desc`)
      .limit(1);
    const runId = input.analysisRunId ?? latest?.analysisRunId ?? report.analysisRunId;
    const run = await getAnalysisRun(tx, actor.organisationId, runId);
    if (run.studyId !== report.studyId) {
      throw new HttpError(
        409,
        `Analysis ${runId} belongs to another study than report ${report.reportNumber}.`,
        [{ field: 'analysisRunId', message: 'Choose an analysis of the same study.' }],
      );
    }
    const [last] = await tx
      .select({ number: max(reportVersions.versionNumber) })
      .from(reportVersions)
      .where(eq(reportVersions.reportId, report.id));
    const version = await insertVersion(tx, queue, actor, report, {
      versionNumber: (last?.number ?? 0) + 1,
      analysisRunId: run.id,
      paperSize: input.paperSize ?? latest?.paperSize ?? 'a4',
      temperatureLogIds:
        input.temperatureLogIds ?? (latest ? await attachedTemperatureLogIds(tx, latest.id) : []),
      context,
    });
    return { reportId: report.id, reportNumber: report.reportNumber, ...version };
  });
}

/** The assessments attached to a version, in their order. */
async function attachedTemperatureLogIds(tx: Executor, versionId: number): Promise<number[]> {
  const rows = await tx
    .select({ id: reportVersionTemperatureLogs.assessmentId })
    .from(reportVersionTemperatureLogs)
    .where(eq(reportVersionTemperatureLogs.reportVersionId, versionId))
    .orderBy(reportVersionTemperatureLogs.position);
  return rows.map((row) => row.id);
}

/** The ids, checked to be the organisation's assessments (404 for any other, as for a missing one). */
async function ownTemperatureLogs(
  tx: Executor,
  organisationId: number,
  ids: readonly number[],
): Promise<number[]> {
  if (ids.length === 0) return [];
  const found = await tx
    .select({ id: temperatureLogAssessments.id })
    .from(temperatureLogAssessments)
    .where(
      and(
        eq(temperatureLogAssessments.organisationId, organisationId),
        inArray(temperatureLogAssessments.id, [...ids]),
      ),
    );
  const known = new Set(found.map((row) => row.id));
  const missing = ids.filter((id) => !known.has(id));
  if (missing.length > 0) {
    throw new HttpError(
      404,
      `There is no temperature-log assessment ${missing.join(', ')} in your organisation.`,
      [{ field: 'temperatureLogIds', message: 'Choose assessments of your organisation.' }],
    );
  }
  return [...ids];
}

async function insertVersion(
  tx: Executor,
  queue: RenderQueue,
  actor: SessionUser,
  report: typeof reports.$inferSelect,
  input: {
    versionNumber: number;
    analysisRunId: number;
    paperSize: PaperSize;
    temperatureLogIds: readonly number[];
    context: AuditContext;
  },
) {
  const template = await templateVersionForNewReports(tx, actor.organisationId);
  const attached = await ownTemperatureLogs(tx, actor.organisationId, input.temperatureLogIds);
  const [version] = await tx
    .insert(reportVersions)
    .values({
      reportId: report.id,
      versionNumber: input.versionNumber,
      analysisRunId: input.analysisRunId,
      templateVersionId: template.id,
      paperSize: input.paperSize,
      requestedBy: actor.id,
    })
    .returning();
  if (attached.length > 0) {
    await tx.insert(reportVersionTemperatureLogs).values(
      attached.map((assessmentId, index) => ({
        reportVersionId: version!.id,
        assessmentId,
        position: index + 1,
      })),
    );
  }
  const jobId = await queue.enqueue(tx, { reportVersionId: version!.id });
  await tx.update(reportVersions).set({ jobId }).where(eq(reportVersions.id, version!.id));
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'report-version.created',
    recordType: 'report_version',
    recordId: version!.id,
    after: {
      reportId: report.id,
      reportNumber: report.reportNumber,
      versionNumber: input.versionNumber,
      analysisRunId: input.analysisRunId,
      templateVersionId: template.id,
      templateSha256: template.sha256,
      paperSize: input.paperSize,
      temperatureLogAssessmentIds: attached,
      renderStatus: 'queued',
      jobId,
    },
    context: input.context,
  });
  return { versionId: version!.id, versionNumber: input.versionNumber, jobId };
}
