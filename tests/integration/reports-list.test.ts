import { inArray, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { createReport, createReportVersion } from '../../server/features/reports/reports.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reportVersions } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The report history list: server-side pagination and the filters (status of the latest version,
 * study, author, creation date), on 25 reports in two studies by two authors. The reports are
 * created by the real service but not rendered (their jobs are not sent), and some versions are
 * moved to other states directly, as the worker would.
 */

let world: TestWorld;
let other: TestWorld;
let reader: Awaited<ReturnType<typeof signIn>>['agent'];
let studyA: number;
let studyB: number;
let today: string;
const reportIds: number[] = [];

function actor(name: 'first' | 'second'): SessionUser {
  const user = world.users[name]!;
  return {
    id: user.id,
    email: user.email,
    fullName: `Test ${name}`,
    organisationId: world.organisationId,
    organisationName: 'test',
    roles: ['analyst'],
  };
}

beforeAll(async () => {
  world = await createTestWorld({ first: ['analyst'], second: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['reviewer'] });
  const sender = openRenderQueue({
    config: parseRenderConfig(),
    pool: world.database.pool,
    supervise: false,
  });
  const queue: RenderQueue = { ...sender, enqueue: async () => 'not-sent' };
  const runA = await makeAnalysisRun(world.database.db, world.organisationId, world.users.first!);
  const runB = await makeAnalysisRun(world.database.db, world.organisationId, world.users.second!);
  studyA = runA.studyId;
  studyB = runB.studyId;
  for (let index = 0; index < 25; index += 1) {
    const byFirst = index % 5 < 3; // 15 by the first author on study A, 10 by the second on study B
    const created = await createReport(
      world.database.db,
      queue,
      actor(byFirst ? 'first' : 'second'),
      byFirst ? runA.runId : runB.runId,
      { title: `Report ${index + 1}` },
      {},
    );
    reportIds.push(created.reportId);
  }
  // Reports 1–4 failed, 5–6 are rendering; the rest stay queued.
  const moved = (ids: number[]) => inArray(reportVersions.reportId, ids);
  await world.database.db
    .update(reportVersions)
    .set({ renderStatus: 'failed', failureReason: 'test' })
    .where(moved(reportIds.slice(0, 4)));
  await world.database.db
    .update(reportVersions)
    .set({ renderStatus: 'rendering' })
    .where(moved(reportIds.slice(4, 6)));
  // Report 1 is rendered again: its latest version is queued, no longer failed.
  await createReportVersion(world.database.db, queue, actor('first'), reportIds[0]!, {}, {});
  const clock = await world.database.db.execute<{ day: string }>(
    sql`select to_char(now() at time zone 'UTC', 'YYYY-MM-DD') as day`,
  );
  today = clock.rows[0]!.day;
  reader = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password)).agent;
}, 120_000);

afterAll(async () => {
  await world?.close();
  await other?.close();
});

const list = (query: Record<string, string | number>) => reader.get('/api/reports').query(query);

describe('report history list', () => {
  it('pages on the server, newest first, with totals and no report on two pages', async () => {
    const pages = await Promise.all([1, 2, 3].map((page) => list({ page, pageSize: 10 })));
    expect(pages.map((page) => page.status)).toEqual([200, 200, 200]);
    expect(pages.map((page) => page.body.items.length)).toEqual([10, 10, 5]);
    expect(pages[0]!.body).toMatchObject({ total: 25, pageCount: 3, page: 1, pageSize: 10 });
    const ids = pages.flatMap((page) => page.body.items.map((item: { id: number }) => item.id));
    expect(ids).toEqual([...reportIds].reverse());
    const beyond = await list({ page: 4, pageSize: 10 });
    expect(beyond.body).toMatchObject({ items: [], total: 25 });
  });

  it('filters by study and by author', async () => {
    expect((await list({ studyId: studyA })).body.total).toBe(15);
    expect((await list({ studyId: studyB })).body.total).toBe(10);
    expect((await list({ authorId: world.users.second!.id })).body.total).toBe(10);
    expect((await list({ authorId: world.users.second!.id, studyId: studyA })).body.total).toBe(0);
  });

  it('filters by the state of the latest version', async () => {
    const failed = await list({ status: 'failed' });
    expect(failed.body.items.map((item: { id: number }) => item.id).sort()).toEqual(
      reportIds.slice(1, 4).sort(),
    );
    expect((await list({ status: 'rendering' })).body.total).toBe(2);
    const queued = await list({ status: 'queued', pageSize: 100 });
    expect(queued.body.total).toBe(20);
    const first = queued.body.items.find((item: { id: number }) => item.id === reportIds[0]);
    expect(first).toMatchObject({
      versionCount: 2,
      latest: { versionNumber: 2, renderStatus: 'queued', pdfUrl: null },
    });
    expect((await list({ status: 'ready' })).body.total).toBe(0);
  });

  it('filters by creation day (inclusive), and refuses a range that ends before it starts', async () => {
    expect((await list({ from: today, to: today })).body.total).toBe(25);
    const tomorrow = new Date(`${today}T00:00:00Z`);
    tomorrow.setUTCDate(tomorrow.getUTCDate() + 1);
    const next = tomorrow.toISOString().slice(0, 10);
    expect((await list({ from: next })).body.total).toBe(0);
    expect((await list({ to: next })).body.total).toBe(25);
    const backwards = await list({ from: next, to: today });
    expect(backwards.status).toBe(400);
    expect(backwards.body.error.details).toEqual([
      { field: 'from', message: '"From" must not be after "To".' },
    ]);
  });

  it('refuses malformed queries with the field named', async () => {
    const bad = await list({ status: 'lost', pageSize: 1000, from: '1 May' });
    expect(bad.status).toBe(400);
    const fields = bad.body.error.details.map((detail: { field: string }) => detail.field).sort();
    expect(fields).toEqual(['from', 'pageSize', 'status']);
  });

  it('offers the studies and authors that have reports, and shows nothing to another organisation', async () => {
    const options = await reader.get('/api/reports/filter-options');
    expect(options.body.studies.map((study: { id: number }) => study.id).sort()).toEqual(
      [studyA, studyB].sort(),
    );
    expect(options.body.authors.map((author: { id: number }) => author.id).sort()).toEqual(
      [world.users.first!.id, world.users.second!.id].sort(),
    );
    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    const theirs = await outsider.get('/api/reports');
    expect(theirs.body).toMatchObject({ items: [], total: 0 });
    expect((await outsider.get(`/api/reports?studyId=${studyA}`)).body.total).toBe(0);
    expect((await outsider.get(`/api/reports/${reportIds[0]}`)).status).toBe(404);
  });
});
