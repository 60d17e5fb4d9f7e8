import { and, eq, inArray, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../../platform/audit/audit-trail.ts';
import type { Database, Executor } from '../../../platform/db/client.ts';
import {
  organisations,
  reports,
  reportTemplateVersions,
  reportVersions,
  reportVersionTemperatureLogs,
  temperatureLogAssessments,
  users,
} from '../../../platform/db/schema/index.ts';
import { type ReportStorage, sha256Hex } from '../../../platform/storage/report-storage.ts';
import { getAnalysisRun } from '../../analysis/index.ts';
import type { AttachedTemperatureLog } from '../render/report-temperature-logs.ts';
import { runFigureSvgs } from '../render/run-figures.ts';
import { versionSource } from '../report-templates.ts';
import { runReportFigures } from './render-pipeline.ts';
import { RenderFailure, type RenderRequest, type ReportRenderer } from './report-renderer.ts';

/**
 * Renders one report version: the body of a `render-report` job. Safe to run any number of times
 * for the same version, concurrently or after a crash, and it stores exactly one PDF:
 *
 * 1. A transaction-scoped advisory lock on the version is held for the whole render, so two
 *    workers never render the same version at once (a second waits; if the holder's process dies,
 *    PostgreSQL drops its connection and the lock with it).
 * 2. Under the lock: a version already `ready` only gets its file promoted (a crash between
 *    commit and rename left it in `.incoming/`); a `failed` one is left alone.
 * 3. Otherwise it is marked `rendering` (committed at once, so the history shows it), rendered,
 *    the PDF written to `.incoming/version-<id>.pdf` and fsynced, and then — in the lock's
 *    transaction — the row is set `ready` with the HTML, hash, size and page count, with its audit
 *    event. After the commit the file is renamed to `<sha[0..2]>/<sha>.pdf`.
 *
 * A permanent failure (template and analysis do not fit) fails the version at once; a transient
 * one is thrown for the queue to retry, except on the last attempt, which fails the version.
 */

const RENDER_LOCK = 7_305_022;
export const WORKER_ACTOR = 'system (report render worker)';

export type RenderOutcome = 'rendered' | 'already-ready' | 'already-failed' | 'failed' | 'missing';

export interface RenderJobContext {
  db: Database;
  storage: ReportStorage;
  renderer: ReportRenderer;
}

export interface RenderAttempt {
  jobId: string;
  /** 0 on the first attempt. */
  retryCount: number;
  retryLimit: number;
}

type Step = { outcome: RenderOutcome; promote?: string };

export async function renderReportVersion(
  context: RenderJobContext,
  versionId: number,
  attempt: RenderAttempt,
): Promise<RenderOutcome> {
  const { db, storage } = context;
  const step: Step = await db.transaction(async (lock) => {
    await lock.execute(sql`select pg_advisory_xact_lock(${RENDER_LOCK}, ${versionId})`);
    const [version] = await lock.select().from(reportVersions).where(eq(reportVersions.id, versionId));
    if (!version) return { outcome: 'missing' };
    if (version.renderStatus === 'ready') return { outcome: 'already-ready', promote: version.pdfSha256! };
    if (version.renderStatus === 'failed') return { outcome: 'already-failed' };

    // Committed on its own connection at once, so the history shows the render running.
    await db
      .update(reportVersions)
      .set({
        renderStatus: 'rendering',
        renderStartedAt: sql`clock_timestamp()`,
        renderAttempts: sql`${reportVersions.renderAttempts} + 1`,
        jobId: attempt.jobId,
      })
      .where(
        and(eq(reportVersions.id, versionId), inArray(reportVersions.renderStatus, ['queued', 'rendering'])),
      );

    let request: RenderRequest;
    let rendered: Awaited<ReturnType<ReportRenderer['render']>>;
    try {
      request = await loadRenderRequest(lock, versionId);
      rendered = await context.renderer.render(request);
    } catch (error) {
      const failure = asFailure(error);
      const lastAttempt = attempt.retryCount >= attempt.retryLimit;
      if (!failure.permanent && !lastAttempt) throw failure;
      const reason = failure.permanent
        ? failure.message
        : `${failure.message} (gave up after ${attempt.retryCount + 1} attempts)`;
      await markFailed(lock, versionId, reason, attempt);
      return { outcome: 'failed' };
    }

    const pdfSha256 = sha256Hex(rendered.pdf);
    await storage.writeIncoming(versionId, rendered.pdf);
    const updated = await lock
      .update(reportVersions)
      .set({
        renderStatus: 'ready',
        html: rendered.html,
        pdfSha256,
        pdfByteSize: rendered.pdf.byteLength,
        pageCount: rendered.pageCount,
        failureReason: null,
        finishedAt: sql`clock_timestamp()`,
      })
      .where(and(eq(reportVersions.id, versionId), eq(reportVersions.renderStatus, 'rendering')))
      .returning({ id: reportVersions.id });
    if (updated.length === 0) {
      await storage.discardIncoming(versionId);
      return { outcome: 'already-failed' };
    }
    await appendAuditEvent(lock, {
      organisationId: request.organisation.id,
      actorLabel: WORKER_ACTOR,
      action: 'report-version.rendered',
      recordType: 'report_version',
      recordId: versionId,
      before: { renderStatus: 'rendering' },
      after: {
        reportNumber: request.report.reportNumber,
        versionNumber: request.version.versionNumber,
        renderStatus: 'ready',
        pdfSha256,
        pdfByteSize: rendered.pdf.byteLength,
        pageCount: rendered.pageCount,
        htmlSha256: sha256Hex(Buffer.from(rendered.html, 'utf8')),
        templateVersionId: request.template.versionId,
        analysisRunId: request.run.id,
      },
      context: { jobId: attempt.jobId, attempt: attempt.retryCount + 1 },
    });
    return { outcome: 'rendered', promote: pdfSha256 };
  });
  if (step.promote) await storage.promote(versionId, step.promote);
  return step.outcome;
}

/**
 * The dead-letter path: a job whose every attempt was lost (process killed, expired) fails its
 * version with a reason, unless the version finished after all.
 */
export async function failAbandonedVersion(db: Database, versionId: number, attempt: RenderAttempt) {
  return db.transaction(async (lock) => {
    await lock.execute(sql`select pg_advisory_xact_lock(${RENDER_LOCK}, ${versionId})`);
    const [version] = await lock.select().from(reportVersions).where(eq(reportVersions.id, versionId));
    if (!version || version.renderStatus === 'ready' || version.renderStatus === 'failed') return false;
    await markFailed(
      lock,
      versionId,
      `The render did not finish in ${version.renderAttempts} attempt${version.renderAttempts === 1 ? '' : 's'}: ` +
        'the worker stopped or ran out of time each time. Render a new version to try again.',
      attempt,
    );
    return true;
  });
}

/**
 * Clears `.incoming/`: for a version that is `ready` the file is promoted (the rename a crash
 * interrupted); for any other version nobody is rendering (its lock is free) the file is left
 * over from a dead attempt and is removed. Returns what it did, by version id.
 */
export async function sweepIncoming(db: Database, storage: ReportStorage) {
  const done: Record<number, 'promoted' | 'removed' | 'busy'> = {};
  for (const versionId of await storage.listIncoming()) {
    done[versionId] = await db.transaction(async (tx) => {
      const locked = await tx.execute<{ ok: boolean }>(
        sql`select pg_try_advisory_xact_lock(${RENDER_LOCK}, ${versionId}) as ok`,
      );
      if (!locked.rows[0]?.ok) return 'busy';
      const [version] = await tx.select().from(reportVersions).where(eq(reportVersions.id, versionId));
      if (version?.renderStatus === 'ready' && version.pdfSha256) {
        await storage.promote(versionId, version.pdfSha256);
        return 'promoted';
      }
      await storage.discardIncoming(versionId);
      return 'removed';
    });
  }
  return done;
}

async function markFailed(tx: Executor, versionId: number, reason: string, attempt: RenderAttempt) {
  const [row] = await tx
    .update(reportVersions)
    .set({ renderStatus: 'failed', failureReason: reason, finishedAt: sql`clock_timestamp()` })
    .where(
      and(eq(reportVersions.id, versionId), inArray(reportVersions.renderStatus, ['queued', 'rendering'])),
    )
    .returning({ reportId: reportVersions.reportId, versionNumber: reportVersions.versionNumber });
  if (!row) return;
  const [report] = await tx.select().from(reports).where(eq(reports.id, row.reportId));
  await appendAuditEvent(tx, {
    organisationId: report?.organisationId ?? null,
    actorLabel: WORKER_ACTOR,
    action: 'report-version.render-failed',
    recordType: 'report_version',
    recordId: versionId,
    after: {
      reportNumber: report?.reportNumber,
      versionNumber: row.versionNumber,
      renderStatus: 'failed',
      reason,
    },
    context: { jobId: attempt.jobId, attempt: attempt.retryCount + 1 },
  });
}

function asFailure(error: unknown): RenderFailure {
  if (error instanceof RenderFailure) return error;
  const message = error instanceof Error ? error.message : String(error);
  return new RenderFailure(`The report could not be rendered: ${message}`, false, { cause: error });
}

/** Everything the pipeline needs for one version, read in the lock's transaction. */
export async function loadRenderRequest(tx: Executor, versionId: number): Promise<RenderRequest> {
  const [row] = await tx
    .select({
      version: reportVersions,
      report: reports,
      organisation: organisations,
      template: reportTemplateVersions,
    })
    .from(reportVersions)
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .innerJoin(organisations, eq(organisations.id, reports.organisationId))
    .innerJoin(reportTemplateVersions, eq(reportTemplateVersions.id, reportVersions.templateVersionId))
    .where(eq(reportVersions.id, versionId));
  if (!row) throw new RenderFailure(`Report version ${versionId} no longer exists.`, true);
  const people = await tx
    .select({ id: users.id, fullName: users.fullName })
    .from(users)
    .where(inArray(users.id, [row.report.authorId, row.version.requestedBy]));
  const person = (id: number) =>
    people.find((candidate) => candidate.id === id) ?? { id, fullName: `user ${id}` };
  let run: RenderRequest['run'];
  try {
    run = await getAnalysisRun(tx, row.report.organisationId, row.version.analysisRunId);
  } catch (error) {
    throw new RenderFailure(
      `The analysis ${row.version.analysisRunId} of this report could not be read.`,
      true,
      {
        cause: error,
      },
    );
  }
  const attached = await tx
    .select({ assessment: temperatureLogAssessments, createdByName: users.fullName })
    .from(reportVersionTemperatureLogs)
    .innerJoin(
      temperatureLogAssessments,
      eq(temperatureLogAssessments.id, reportVersionTemperatureLogs.assessmentId),
    )
    .innerJoin(users, eq(users.id, temperatureLogAssessments.createdBy))
    .where(eq(reportVersionTemperatureLogs.reportVersionId, versionId))
    .orderBy(reportVersionTemperatureLogs.position);
  // The run's figures, drawn once for its first report and kept beside it (runs are write-once).
  let runFigures: RenderRequest['runFigures'];
  try {
    const specs = runReportFigures({ run });
    const svgs = await runFigureSvgs(tx, run.id, specs);
    runFigures = specs.map(({ id, title, description }) => ({ id, title, description, svg: svgs.get(id)! }));
  } catch (error) {
    throw new RenderFailure(
      `A figure of analysis ${run.id} could not be drawn: ${(error as Error).message}`,
      true,
      {
        cause: error,
      },
    );
  }
  return {
    runFigures,
    temperatureLogs: attached.map(({ assessment, createdByName }) => ({
      id: assessment.id,
      title: assessment.title,
      fileName: assessment.fileName,
      sha256: assessment.sha256,
      createdAt: assessment.createdAt,
      createdByName,
      engineVersion: assessment.engineVersion,
      result: assessment.result as AttachedTemperatureLog['result'],
      figureSvg: assessment.figureSvg,
    })),
    organisation: {
      id: row.organisation.id,
      name: row.organisation.name,
      timeZone: row.organisation.timeZone,
    },
    report: {
      id: row.report.id,
      reportNumber: row.report.reportNumber,
      title: row.report.title,
      createdAt: row.report.createdAt,
      author: person(row.report.authorId),
    },
    version: {
      id: row.version.id,
      versionNumber: row.version.versionNumber,
      paperSize: row.version.paperSize,
      createdAt: row.version.createdAt,
      requestedBy: person(row.version.requestedBy),
    },
    run,
    template: {
      versionId: row.template.id,
      versionNumber: row.template.versionNumber,
      sha256: row.template.sha256,
      source: versionSource(row.template),
    },
  };
}
