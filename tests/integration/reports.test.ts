import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { renderReportVersion, sweepIncoming } from '../../server/features/reports/queue/render-report-job.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import {
  auditEvents,
  reportTemplateVersions,
  reportVersions,
} from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Reports end to end on the real database with the real render pipeline (template, server-side
 * figures, Debian Chromium): create from an analysis, render through the pg-boss queue, store the
 * PDF content-addressed, serve it, and refuse every change to a stored output.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-reports-test-'));
process.env.REPORTS_DIR = reportsDir;

let world: TestWorld;
let other: TestWorld;
let queue: RenderQueue;
let worker: RenderWorker;
let runId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let reviewer: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;
const storage = reportStorage(reportsDir);

async function versionRow(reportId: number, versionNumber: number) {
  const [row] = await world.database.db
    .select()
    .from(reportVersions)
    .where(and(eq(reportVersions.reportId, reportId), eq(reportVersions.versionNumber, versionNumber)));
  return row!;
}

async function waitForFinal(reportId: number, versionNumber: number, timeoutMs = 60_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const row = await versionRow(reportId, versionNumber);
    // Ready is committed just before the file is renamed into place; wait for the rename too.
    if (row.renderStatus === 'failed') return row;
    if (row.renderStatus === 'ready' && (await storage.hasPdf(row.pdfSha256!))) return row;
    if (Date.now() > deadline) throw new Error(`version ${versionNumber} still ${row.renderStatus}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

/** The database's own message for a refused statement (drizzle wraps it as the cause). */
async function refusal(statement: Promise<unknown>): Promise<string> {
  try {
    await statement;
  } catch (error) {
    const cause = (error as { cause?: { message?: string } }).cause;
    return cause?.message ?? (error as Error).message;
  }
  return 'the statement was accepted';
}

function pdfFilesUnder(dir: string): string[] {
  return readdirSync(dir, { recursive: true, encoding: 'utf8' }).filter((name) => name.endsWith('.pdf'));
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer', 'admin'] });
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!));
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password)).agent;
  token = csrfFrom((await analyst.get('/')).text);
  const config = parseRenderConfig();
  queue = openRenderQueue({ config, connectionString: process.env.DATABASE_URL!, supervise: true });
  worker = await startRenderWorker({
    db: world.database.db,
    queue,
    storage,
    renderer: createRenderPipeline(),
    log: () => undefined,
  });
}, 120_000);

afterAll(async () => {
  await worker?.close();
  await world?.close();
  await other?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

describe('creating and rendering a report', () => {
  let reportId: number;
  let reportNumber: string;

  it('an analyst creates a report from an analysis run; reviewers may not', async () => {
    const refused = await reviewer
      .post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', csrfFrom((await reviewer.get('/')).text))
      .send({});
    expect(refused.status).toBe(403);

    const response = await analyst
      .post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', token)
      .send({ paperSize: 'a4' });
    expect(response.status).toBe(201);
    reportId = response.body.reportId;
    reportNumber = response.body.reportNumber;
    // RL-<year of the database clock>-<sequence>, first report of this organisation.
    const year = new Date().getUTCFullYear();
    expect([`RL-${year}-0001`, `RL-${year + 1}-0001`]).toContain(reportNumber);
    expect(response.body).toMatchObject({ versionNumber: 1, renderStatus: 'queued' });
  });

  it('the job renders it; the PDF is stored content-addressed and its SHA-256 matches the row', async () => {
    const row = await waitForFinal(reportId, 1);
    expect(row.failureReason).toBeNull();
    expect(row.renderStatus).toBe('ready');
    const file = storage.pdfPath(row.pdfSha256!);
    expect(path.relative(reportsDir, file)).toBe(
      path.join(row.pdfSha256!.slice(0, 2), `${row.pdfSha256}.pdf`),
    );
    const bytes = readFileSync(file);
    // SHA-256 per FIPS 180-4, computed independently with coreutils' sha256sum.
    expect(execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0]).toBe(row.pdfSha256);
    expect(bytes.length).toBe(row.pdfByteSize);
    expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    // Page count as poppler's pdfinfo reads it.
    const info = execFileSync('pdfinfo', [file], { encoding: 'utf8' });
    expect(Number(/Pages:\s+(\d+)/.exec(info)?.[1])).toBe(row.pageCount);
    expect(info).toContain(reportNumber);
    expect(row.html).toContain(reportNumber);
    expect(row.renderAttempts).toBe(1);
    expect(row.finishedAt!.getTime()).toBeGreaterThanOrEqual(row.renderStartedAt!.getTime());
    expect(readdirSync(path.join(reportsDir, '.incoming'))).toEqual([]);
  });

  it('serves the PDF as a download named by the report number and the HTML preview without scripts', async () => {
    const row = await versionRow(reportId, 1);
    const pdf = await reviewer.get(`/api/reports/${reportId}/versions/1/pdf`).buffer(true);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    expect(pdf.headers['content-disposition']).toBe(`attachment; filename="${reportNumber}-v1.pdf"`);
    expect(sha256Hex(pdf.body as Buffer)).toBe(row.pdfSha256);

    const html = await reviewer.get(`/api/reports/${reportId}/versions/1/html`);
    expect(html.status).toBe(200);
    expect(html.text).toBe(row.html);
    const csp = html.headers['content-security-policy'] as string;
    expect(csp).toContain("script-src 'none'");
    expect(csp).toContain("default-src 'none'");
    expect(csp).toContain('sandbox');
  });

  it('the detail and the audit trail show what happened', async () => {
    const detail = await reviewer.get(`/api/reports/${reportId}`);
    expect(detail.status).toBe(200);
    expect(detail.body.versions).toHaveLength(1);
    expect(detail.body.versions[0]).toMatchObject({ renderStatus: 'ready', templateVersionNumber: 1 });
    const actions = await world.database.db
      .select({ action: auditEvents.action })
      .from(auditEvents)
      .where(eq(auditEvents.organisationId, world.organisationId));
    const names = actions.map((entry) => entry.action);
    for (const action of [
      'report-template.version-created',
      'report-template.published',
      'report.created',
      'report-version.created',
      'report-version.rendered',
    ]) {
      expect(names).toContain(action);
    }
  });

  it('another organisation cannot see the report', async () => {
    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    expect((await outsider.get(`/api/reports/${reportId}`)).status).toBe(404);
    expect((await outsider.get(`/api/reports/${reportId}/versions/1/pdf`)).status).toBe(404);
  });

  it('the database refuses any change to a ready version and to template versions', async () => {
    const row = await versionRow(reportId, 1);
    const db = world.database.db;
    expect(
      await refusal(
        db
          .update(reportVersions)
          .set({ pdfSha256: '0'.repeat(64) })
          .where(eq(reportVersions.id, row.id)),
      ),
    ).toMatch(/is ready and can no longer change/);
    expect(
      await refusal(
        db.update(reportVersions).set({ html: '<p>edited</p>' }).where(eq(reportVersions.id, row.id)),
      ),
    ).toMatch(/is ready and can no longer change/);
    expect(await refusal(db.delete(reportVersions).where(eq(reportVersions.id, row.id)))).toMatch(
      /never deleted/,
    );
    expect(
      await refusal(
        db.execute(
          sql`update report_template_versions set main_source = 'x' where id = ${row.templateVersionId}`,
        ),
      ),
    ).toMatch(/write-once/);
    expect(await refusal(db.execute(sql`update reports set title = 'x' where id = ${reportId}`))).toMatch(
      /write-once/,
    );
    expect((await versionRow(reportId, 1)).pdfSha256).toBe(row.pdfSha256);
  });

  it('a stored PDF altered on disk is refused at download, not served', async () => {
    const row = await versionRow(reportId, 1);
    const file = storage.pdfPath(row.pdfSha256!);
    const original = readFileSync(file);
    const altered = Buffer.from(original);
    altered[altered.length - 10] = altered[altered.length - 10]! ^ 0xff;
    writeFileSync(file, altered);
    try {
      const response = await reviewer.get(`/api/reports/${reportId}/versions/1/pdf`);
      expect(response.status).toBe(500);
      expect(response.body.error.message).toMatch(/does not match its record/);
    } finally {
      writeFileSync(file, original);
    }
    expect((await reviewer.get(`/api/reports/${reportId}/versions/1/pdf`)).status).toBe(200);
  });

  it('rendering again makes version 2 and leaves version 1 and its PDF as they were', async () => {
    const before = await versionRow(reportId, 1);
    const response = await analyst
      .post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', token)
      .send({ paperSize: 'letter' });
    expect(response.status).toBe(201);
    expect(response.body.versionNumber).toBe(2);
    const second = await waitForFinal(reportId, 2);
    expect(second.renderStatus).toBe('ready');
    expect(second.paperSize).toBe('letter');
    // US Letter is 612 × 792 pt (ANSI/ASME Y14.1 8.5 × 11 in).
    expect(execFileSync('pdfinfo', [storage.pdfPath(second.pdfSha256!)], { encoding: 'utf8' })).toMatch(
      /Page size:\s+612(\.\d+)? x 792/,
    );
    expect(second.pdfSha256).not.toBe(before.pdfSha256);
    const after = await versionRow(reportId, 1);
    expect(after).toEqual(before);
    expect(sha256Hex(readFileSync(storage.pdfPath(before.pdfSha256!)))).toBe(before.pdfSha256);
  });

  it('a retried job finds the version ready and only finishes the move (crash between commit and rename)', async () => {
    const row = await versionRow(reportId, 1);
    const final = storage.pdfPath(row.pdfSha256!);
    // Put the store back into the state a crash right after the commit leaves.
    renameSync(final, storage.incomingPath(row.id));
    const outcome = await renderReportVersion(
      { db: world.database.db, storage, renderer: failingRenderer() },
      row.id,
      { jobId: 'retry-after-crash', retryCount: 1, retryLimit: 3 },
    );
    expect(outcome).toBe('already-ready');
    expect(sha256Hex(readFileSync(final))).toBe(row.pdfSha256);
    expect(readdirSync(path.join(reportsDir, '.incoming'))).toEqual([]);
    expect(pdfFilesUnder(reportsDir)).toHaveLength(2);
    expect(await versionRow(reportId, 1)).toEqual(row);
  });

  it('the start-up sweep promotes a ready version’s file and removes leftovers of finished ones', async () => {
    const row = await versionRow(reportId, 2);
    renameSync(storage.pdfPath(row.pdfSha256!), storage.incomingPath(row.id));
    writeFileSync(storage.incomingPath(999_999_999), 'left by a dead attempt');
    const swept = await sweepIncoming(world.database.db, storage);
    expect(swept).toEqual({ [row.id]: 'promoted', 999999999: 'removed' });
    expect(readdirSync(path.join(reportsDir, '.incoming'))).toEqual([]);
    expect(pdfFilesUnder(reportsDir)).toHaveLength(2);
  });

  it('a template that cannot be filled in fails the version with a readable reason, without retries', async () => {
    const [published] = await world.database.db
      .select()
      .from(reportTemplateVersions)
      .where(eq(reportTemplateVersions.id, (await versionRow(reportId, 1)).templateVersionId));
    const { createTemplateVersion, publishTemplateVersion } = await import(
      '../../server/features/reports/report-templates.ts'
    );
    const actor = { userId: world.users.analyst!.id, label: 'test' };
    const broken = await createTemplateVersion(world.database.db, {
      organisationId: world.organisationId,
      templateId: published!.templateId,
      source: { body: '<p>{{study.nonexistentField}}</p>', partials: {}, stylesheet: '' },
      note: 'misspelt variable, for the test',
      actor,
    });
    await publishTemplateVersion(world.database.db, {
      organisationId: world.organisationId,
      templateId: published!.templateId,
      versionId: broken.id,
      actor,
    });
    try {
      const response = await analyst
        .post(`/api/reports/${reportId}/versions`)
        .set('x-csrf-token', token)
        .send({});
      expect(response.status).toBe(201);
      const failed = await waitForFinal(reportId, response.body.versionNumber);
      expect(failed.renderStatus).toBe('failed');
      expect(failed.failureReason).toMatch(/Template version 2 could not be filled in/);
      expect(failed.failureReason).toContain('nonexistentField');
      expect(failed.renderAttempts).toBe(1);
      expect(failed.pdfSha256).toBeNull();
      const pdf = await analyst.get(`/api/reports/${reportId}/versions/${response.body.versionNumber}/pdf`);
      expect(pdf.status).toBe(409);
      expect(pdf.body.error.message).toMatch(/failed to render/);
    } finally {
      await publishTemplateVersion(world.database.db, {
        organisationId: world.organisationId,
        templateId: published!.templateId,
        versionId: published!.id,
        actor,
      });
    }
  });
});

describe('report numbers', () => {
  it('are allocated in the transaction: concurrent reports get distinct, consecutive numbers', async () => {
    const { createReport } = await import('../../server/features/reports/reports.ts');
    const me = (await analyst.get('/api/me')).body;
    const numbers = await Promise.all(
      Array.from({ length: 5 }, () => createReport(world.database.db, noJobs(), me, runId, {}, {})),
    );
    const sequences = numbers.map((created) => Number(created.reportNumber.slice(-4))).sort((a, b) => a - b);
    expect(new Set(sequences).size).toBe(5);
    expect(sequences[4]! - sequences[0]!).toBe(4);
  });
});

/** A queue that records nothing, for reports that must not be rendered. */
function noJobs(): RenderQueue {
  return { ...queue, enqueue: async () => 'not-queued' };
}

function failingRenderer() {
  return {
    render: () => Promise.reject(new Error('the renderer must not be called for a ready version')),
    close: async () => undefined,
  };
}
