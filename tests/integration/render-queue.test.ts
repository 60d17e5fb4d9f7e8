import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, asc, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  openRenderQueue,
  RENDER_DEAD_LETTER_QUEUE,
  RENDER_QUEUE,
  type RenderQueue,
} from '../../server/features/reports/queue/render-queue.ts';
import {
  failAbandonedVersion,
  renderReportVersion,
} from '../../server/features/reports/queue/render-report-job.ts';
import { RenderFailure } from '../../server/features/reports/queue/report-renderer.ts';
import { createReport } from '../../server/features/reports/reports.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { auditEvents, reportVersions } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The queue's guarantees that do not need Chromium: the job is sent inside the transaction that
 * creates the version, the queue carries the configured retries, expiry and dead-letter queue,
 * transient failures are retried until the last attempt, and a job whose attempts were all lost
 * fails its version with a reason.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-queue-test-'));
let world: TestWorld;
let queue: RenderQueue;
let actor: SessionUser;
let runId: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!));
  queue = openRenderQueue({
    config: { ...parseRenderConfig({}), retryLimit: 3, expireInSeconds: 60 },
    pool: world.database.pool,
    supervise: false,
  });
  actor = {
    id: world.users.analyst!.id,
    email: world.users.analyst!.email,
    fullName: 'Test analyst',
    organisationId: world.organisationId,
    organisationName: 'test',
    roles: ['analyst'],
  };
});
afterAll(async () => {
  // Jobs this file sent must not be rendered by a later file's worker.
  await world?.database.db.execute(sql`delete from pgboss.job where data->>'test' = 'render-queue'`);
  await queue?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

const jobsFor = async (versionId: number) =>
  (
    await world.database.db.execute<{
      id: string;
      state: string;
      retry_limit: number;
      expire_in: string;
      dead_letter: string;
    }>(
      sql`select id, state, retry_limit, expire_in::text, dead_letter from pgboss.job
          where name = ${RENDER_QUEUE} and (data->>'reportVersionId')::int = ${versionId}`,
    )
  ).rows;

function transientRenderer() {
  return {
    render: () =>
      Promise.reject(new RenderFailure('Chromium could not print the report: target closed', false)),
    close: async () => undefined,
  };
}

describe('the render queue', () => {
  it('sends the job in the creating transaction: a rolled-back report leaves no job and no version', async () => {
    // No job names this version (a global job count would race with queue maintenance).
    let versionId = 0;
    const failing = {
      ...queue,
      enqueue: async (tx: Parameters<RenderQueue['enqueue']>[0], data: { reportVersionId: number }) => {
        versionId = data.reportVersionId;
        await queue.enqueue(tx, data);
        throw new Error('crash after the job was sent, before the commit');
      },
    };
    await expect(createReport(world.database.db, failing, actor, runId, {}, {})).rejects.toThrow(
      /crash after/,
    );
    expect(versionId).toBeGreaterThan(0);
    expect(await jobsFor(versionId)).toEqual([]);
    expect(
      await world.database.db.select().from(reportVersions).where(eq(reportVersions.id, versionId)),
    ).toEqual([]);
  });

  it('a committed report has exactly one job, with the configured retries, expiry and dead-letter queue', async () => {
    const created = await createReport(world.database.db, taggedQueue(), actor, runId, {}, {});
    const jobs = await jobsFor(created.versionId);
    expect(jobs).toHaveLength(1);
    expect(jobs[0]).toMatchObject({
      id: created.jobId,
      retry_limit: 3,
      expire_in: '00:01:00',
      dead_letter: RENDER_DEAD_LETTER_QUEUE,
    });
    const [version] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.id, created.versionId));
    expect(version!.jobId).toBe(created.jobId);
  });

  it('a transient failure is thrown for a retry, and fails the version only on the last attempt', async () => {
    const created = await createReport(world.database.db, taggedQueue(), actor, runId, {}, {});
    const context = {
      db: world.database.db,
      storage: reportStorage(reportsDir),
      renderer: transientRenderer(),
    };
    await expect(
      renderReportVersion(context, created.versionId, { jobId: created.jobId, retryCount: 0, retryLimit: 2 }),
    ).rejects.toThrow(/target closed/);
    const [retrying] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.id, created.versionId));
    expect(retrying).toMatchObject({ renderStatus: 'rendering', renderAttempts: 1, failureReason: null });

    const outcome = await renderReportVersion(context, created.versionId, {
      jobId: created.jobId,
      retryCount: 2,
      retryLimit: 2,
    });
    expect(outcome).toBe('failed');
    const [failed] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.id, created.versionId));
    expect(failed!.renderStatus).toBe('failed');
    expect(failed!.failureReason).toBe(
      'Chromium could not print the report: target closed (gave up after 3 attempts)',
    );
    const events = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'report_version'),
          eq(auditEvents.recordId, String(created.versionId)),
        ),
      )
      // In the order they were recorded: a SELECT without ORDER BY has no order.
      .orderBy(asc(auditEvents.id));
    expect(events.map((event) => event.action)).toEqual([
      'report-version.created',
      'report-version.render-failed',
    ]);
  });

  it('the dead-letter path fails a version whose every attempt was lost, and leaves finished ones alone', async () => {
    const created = await createReport(world.database.db, taggedQueue(), actor, runId, {}, {});
    await world.database.db
      .update(reportVersions)
      .set({ renderStatus: 'rendering', renderAttempts: 4 })
      .where(eq(reportVersions.id, created.versionId));
    const attempt = { jobId: created.jobId, retryCount: 0, retryLimit: 5 };
    expect(await failAbandonedVersion(world.database.db, created.versionId, attempt)).toBe(true);
    const [failed] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.id, created.versionId));
    expect(failed!.failureReason).toBe(
      'The render did not finish in 4 attempts: the worker stopped or ran out of time each time. Render a new version to try again.',
    );
    expect(await failAbandonedVersion(world.database.db, created.versionId, attempt)).toBe(false);
  });
});

/** The real queue, with jobs marked so this file can remove them (no worker here renders them). */
function taggedQueue(): RenderQueue {
  return {
    ...queue,
    enqueue: async (tx, data) => {
      const id = await queue.enqueue(tx, data);
      await tx.execute(
        sql`update pgboss.job set data = data || '{"test":"render-queue"}'::jsonb where id = ${id}::uuid`,
      );
      return id;
    },
  };
}
