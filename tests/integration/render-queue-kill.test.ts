import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { createReport } from '../../server/features/reports/reports.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { auditEvents, reportVersions } from '../../server/platform/db/schema/index.ts';
import { sha256Hex } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The crash test: a separate worker process (`server/worker.ts`, as `npm run worker` runs it) is
 * killed with SIGKILL while it renders; a new one is started; the version must end `ready` with
 * exactly one stored PDF. Short queue timings make pg-boss expire the lost job within seconds.
 */

const REPO = path.resolve(import.meta.dirname, '../..');
const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-kill-test-'));
const TIMINGS = {
  RENDER_EXPIRE_SECONDS: '5',
  RENDER_MAINTENANCE_SECONDS: '1',
  RENDER_RETRY_DELAY_SECONDS: '1',
  RENDER_RETRY_LIMIT: '3',
  RENDER_POLL_SECONDS: '0.5',
};
Object.assign(process.env, TIMINGS, { REPORTS_DIR: reportsDir });

let world: TestWorld;
let queue: RenderQueue;
const children: ChildProcess[] = [];

function startWorker(): { child: ChildProcess; output: () => string } {
  let output = '';
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts'], {
    cwd: REPO,
    env: { ...process.env, ...TIMINGS, REPORTS_DIR: reportsDir, DATABASE_URL: process.env.DATABASE_URL },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout!.on('data', (chunk) => (output += chunk));
  child.stderr!.on('data', (chunk) => (output += chunk));
  children.push(child);
  return { child, output: () => output };
}

/** Every process below `pid` (Chromium and its helpers), so none outlives the killed worker. */
function descendants(pid: number): number[] {
  let listed = '';
  try {
    listed = execFileSync('ps', ['-o', 'pid=', '--ppid', String(pid)], { encoding: 'utf8' });
  } catch {
    return [];
  }
  const direct = listed.split(/\s+/).filter(Boolean).map(Number);
  return direct.flatMap((child) => [child, ...descendants(child)]);
}

async function status(versionId: number) {
  const [row] = await world.database.db.select().from(reportVersions).where(eq(reportVersions.id, versionId));
  return row!;
}

async function until<T>(probe: () => Promise<T | undefined>, timeoutMs: number, what: string): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value !== undefined) return value;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  queue = openRenderQueue({ config: parseRenderConfig(), pool: world.database.pool, supervise: false });
}, 60_000);

afterAll(async () => {
  for (const child of children) if (child.exitCode === null) child.kill('SIGKILL');
  await queue?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

describe('a worker killed mid-render', () => {
  it('ends with the version ready and exactly one stored PDF for it', async () => {
    const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!);
    const me = {
      id: world.users.analyst!.id,
      email: world.users.analyst!.email,
      fullName: 'Test analyst',
      organisationId: world.organisationId,
      organisationName: 'test',
      roles: ['analyst' as const],
    };
    const created = await createReport(world.database.db, queue, me, runId, {}, {});

    const first = startWorker();
    await until(
      async () => ((await status(created.versionId)).renderStatus === 'rendering' ? true : undefined),
      60_000,
      'the first worker to start rendering',
    );
    const orphans = descendants(first.child.pid!);
    const profiles = orphans.flatMap((pid) => {
      try {
        const args = readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0');
        return args
          .filter((arg) => arg.startsWith('--user-data-dir='))
          .map((arg) => arg.slice('--user-data-dir='.length));
      } catch {
        return [];
      }
    });
    first.child.kill('SIGKILL');
    await new Promise((resolve) => first.child.once('exit', resolve));
    for (const pid of orphans) {
      try {
        process.kill(pid, 'SIGKILL');
      } catch {
        // already gone with its parent
      }
    }
    // The killed worker could not remove its Chromium profile; do it for it.
    for (const profile of new Set(profiles)) rmSync(profile, { recursive: true, force: true });
    // Killed while rendering: nothing was committed as ready.
    const afterKill = await status(created.versionId);
    expect(afterKill.renderStatus).toBe('rendering');
    expect(afterKill.pdfSha256).toBeNull();

    const second = startWorker();
    const ready = await until(
      async () => {
        const row = await status(created.versionId);
        if (row.renderStatus === 'failed')
          throw new Error(`failed: ${row.failureReason}\n${second.output()}`);
        return row.renderStatus === 'ready' ? row : undefined;
      },
      90_000,
      'the second worker to finish the render',
    );
    expect(ready.renderAttempts).toBeGreaterThanOrEqual(2);

    // The job ends once the file is in place: the row turns ready at the commit, the rename and
    // pg-boss's completion follow. One job, completed after at least one retry.
    const job = await until(
      async () => {
        const jobs = await world.database.db.execute<{ state: string; retry_count: number }>(
          sql`select state, retry_count from pgboss.job where id = ${ready.jobId}::uuid
              union all select state, retry_count from pgboss.archive where id = ${ready.jobId}::uuid`,
        );
        expect(jobs.rows).toHaveLength(1);
        // A render slower than the (short) expiry here may be failed and retried by pg-boss once
        // more while it finishes; the retry then finds the version ready and completes.
        return jobs.rows[0]!.state === 'completed' ? jobs.rows[0]! : undefined;
      },
      30_000,
      'pg-boss to record the job as finished',
    );
    expect(job.state).toBe('completed');
    expect(job.retry_count).toBeGreaterThanOrEqual(1);
    // Exactly one PDF in the whole store, named by the row's hash, and nothing left incoming.
    const files = readdirSync(reportsDir, { recursive: true, encoding: 'utf8' }).filter((name) =>
      name.endsWith('.pdf'),
    );
    expect(files).toEqual([path.join(ready.pdfSha256!.slice(0, 2), `${ready.pdfSha256}.pdf`)]);
    expect(sha256Hex(readFileSync(path.join(reportsDir, files[0]!)))).toBe(ready.pdfSha256);

    // One "rendered" audit event for the version.
    const rendered = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.action, 'report-version.rendered'),
          eq(auditEvents.recordId, String(ready.id)),
        ),
      );
    expect(rendered).toHaveLength(1);

    // The second worker stops cleanly on SIGTERM.
    second.child.kill('SIGTERM');
    const code = await new Promise((resolve) => second.child.once('exit', resolve));
    expect(code).toBe(0);
  }, 180_000);
});
