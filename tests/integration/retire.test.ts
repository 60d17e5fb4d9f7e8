import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  auditEvents,
  datasets,
  reportReviews,
  reportVersions,
  retirements,
} from '../../server/platform/db/schema/index.ts';
import { openSuperuserDatabase } from '../support/superuser.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { type Agent, reportWithoutRender, studyWithRun, tokenOf } from './study-flow-fixture.ts';

/**
 * §2 of issue 13: a dataset, an analysis or a draft report made by mistake is retired with a
 * reason — an appended record of its own, never a change to the record — hidden from the default
 * lists and shown with "include retired". Signed records cannot be retired.
 */

let world: TestWorld;
let other: TestWorld;
let agents: Record<string, Agent>;

beforeAll(async () => {
  world = await createTestWorld({
    analyst: ['analyst'],
    colleague: ['analyst'],
    reviewer: ['reviewer'],
    admin: ['admin'],
  });
  other = await createTestWorld({ outsider: ['analyst', 'admin'] });
  agents = {};
  for (const name of ['analyst', 'colleague', 'reviewer', 'admin'])
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
  agents.outsider = (
    await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password)
  ).agent;
});
afterAll(async () => {
  await world?.close();
  await other?.close();
});

async function retire(who: string, path: string, reason: string) {
  const agent = agents[who]!;
  return agent
    .post(path)
    .set('x-csrf-token', await tokenOf(agent))
    .send({ reason });
}

const createReport = (runId: number) => reportWithoutRender(world, 'analyst', runId);

/** The database's own message for a refused statement (drizzle wraps it as the cause). */
async function refusal(statement: Promise<unknown>): Promise<string> {
  try {
    await statement;
  } catch (error) {
    return (error as { cause?: { message?: string } }).cause?.message ?? (error as Error).message;
  }
  return 'the statement was accepted';
}

describe('retiring a dataset', () => {
  let studyId: number;
  let datasetId: number;
  let runId: number;

  beforeAll(async () => {
    ({ studyId, datasetId, runId } = await studyWithRun(agents.analyst!));
  });

  it('is refused for a reviewer, another analyst, another organisation and an empty reason', async () => {
    const path = `/api/datasets/${datasetId}/retire`;
    expect((await retire('reviewer', path, 'a reviewer tries')).status).toBe(403);
    const colleague = await retire('colleague', path, 'not my dataset');
    expect(colleague.status).toBe(403);
    expect(colleague.body.error.message).toContain('Only the analyst who made dataset');
    expect((await retire('outsider', path, 'another organisation')).status).toBe(404);
    const empty = await retire('analyst', path, '   ');
    expect(empty.status).toBe(400);
    expect(empty.body.error.details).toEqual([
      { field: 'reason', message: expect.stringContaining('Give the reason') },
    ]);
    expect(await world.database.db.$count(retirements, eq(retirements.recordId, datasetId))).toBe(0);
  });

  it('by its analyst: an appended retirement and audit event; the dataset row is untouched', async () => {
    const [before] = await world.database.db.select().from(datasets).where(eq(datasets.id, datasetId));
    const response = await retire(
      'analyst',
      `/api/datasets/${datasetId}/retire`,
      'Imported with the wrong sheet (invented).',
    );
    expect(response.status).toBe(201);
    expect(response.body).toMatchObject({
      recordType: 'dataset',
      recordId: datasetId,
      retiredBy: 'Test analyst',
    });
    const [after] = await world.database.db.select().from(datasets).where(eq(datasets.id, datasetId));
    expect(after).toEqual(before);
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.action, 'dataset.retired'), eq(auditEvents.recordId, String(datasetId))));
    expect(event!.afterValue).toMatchObject({
      retired: true,
      reason: 'Imported with the wrong sheet (invented).',
    });
    const twice = await retire('analyst', `/api/datasets/${datasetId}/retire`, 'again');
    expect(twice.status).toBe(409);
    expect(twice.body.error.message).toContain('was already retired');
  });

  it('the study page hides it by default and shows it, marked, with "include retired"; its run still opens', async () => {
    const page = await agents.analyst!.get(`/studies/${studyId}`);
    expect(page.text).not.toContain(`data-dataset-id="${datasetId}"`);
    expect(page.text).toContain('Include retired (1 hidden)');
    const all = await agents.analyst!.get(`/studies/${studyId}?includeRetired=1`);
    expect(all.text).toContain(`#${datasetId} <span`);
    expect(all.text).toContain('Imported with the wrong sheet (invented).');
    expect(all.text).not.toContain(`href="/retire/dataset/${datasetId}"`);
    expect((await agents.reviewer!.get(`/analyses/${runId}`)).status).toBe(200);
  });

  it('nothing new is built on it: a new analysis of the retired dataset is refused', async () => {
    const refused = await agents
      .analyst!.post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', await tokenOf(agents.analyst!))
      .send({});
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toContain(`Dataset #${datasetId} was retired`);
  });

  it('retirements are write-once in the database', async () => {
    const db = world.database.db;
    expect(
      await refusal(db.update(retirements).set({ reason: 'x' }).where(eq(retirements.recordId, datasetId))),
    ).toMatch(/retirements is write-once: UPDATE is not allowed/);
    expect(await refusal(db.delete(retirements).where(eq(retirements.recordId, datasetId)))).toMatch(
      /retirements is write-once: DELETE is not allowed/,
    );
    // The app role holds no TRUNCATE privilege (npm test connects as it); a superuser meets the trigger.
    expect(await refusal(db.execute(sql`truncate retirements`))).toMatch(
      /TRUNCATE is not allowed|permission denied for table retirements/,
    );
    const superuser = await openSuperuserDatabase();
    try {
      expect(await refusal(superuser.db.execute(sql`truncate retirements`))).toMatch(
        /TRUNCATE is not allowed/,
      );
    } finally {
      await superuser.close();
    }
  });
});

describe('retiring an analysis through its page', () => {
  it('offers "Retire…" to its analyst, asks for a reason, and the page then says it is retired', async () => {
    const { studyId, runId } = await studyWithRun(agents.analyst!);
    const page = await agents.analyst!.get(`/analyses/${runId}`);
    expect(page.text).toContain(`href="/retire/analysis/${runId}"`);
    expect((await agents.reviewer!.get(`/analyses/${runId}`)).text).not.toContain(
      `href="/retire/analysis/${runId}"`,
    );
    expect((await agents.colleague!.get(`/analyses/${runId}`)).text).not.toContain(
      `href="/retire/analysis/${runId}"`,
    );
    expect((await agents.reviewer!.get(`/retire/analysis/${runId}`)).status).toBe(403);
    expect((await agents.colleague!.get(`/retire/analysis/${runId}`)).status).toBe(403);

    const form = await agents.analyst!.get(`/retire/analysis/${runId}`);
    expect(form.status).toBe(200);
    const token = csrfFrom(form.text);
    const empty = await agents
      .analyst!.post(`/retire/analysis/${runId}`)
      .type('form')
      .send({ _csrf: token, reason: '' });
    expect(empty.status).toBe(400);
    expect(empty.text).toContain('Give the reason for retiring it');
    const done = await agents
      .analyst!.post(`/retire/analysis/${runId}`)
      .type('form')
      .send({ _csrf: token, reason: 'Run with the wrong options (invented).' });
    expect(done.status).toBe(303);
    expect(done.headers.location).toBe(`/analyses/${runId}?retired=1`);
    const retired = await agents.analyst!.get(`/analyses/${runId}`);
    expect(retired.text).toContain('id="retired"');
    expect(retired.text).toContain('Reason: Run with the wrong options (invented).');
    // A report of a retired analysis is refused before anything is queued.
    const report = await agents
      .analyst!.post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', await tokenOf(agents.analyst!))
      .send({ paperSize: 'a4' });
    expect(report.status).toBe(409);
    expect(report.body.error.message).toContain(`Analysis #${runId} was retired`);
    const study = await agents.analyst!.get(`/studies/${studyId}`);
    expect(study.text).not.toContain(`href="/analyses/${runId}"`);
    expect((await agents.analyst!.get(`/studies/${studyId}?includeRetired=1`)).text).toContain(
      `href="/analyses/${runId}"`,
    );
  });
});

describe('retiring a report', () => {
  it('an admin retires a draft report: left out of the list unless "include retired", and its detail says so', async () => {
    const { runId } = await studyWithRun(agents.analyst!);
    const reportId = await createReport(runId);
    expect((await retire('reviewer', `/api/reports/${reportId}/retire`, 'a reviewer tries')).status).toBe(
      403,
    );
    const response = await retire(
      'admin',
      `/api/reports/${reportId}/retire`,
      'Created from the wrong analysis (invented).',
    );
    expect(response.status).toBe(201);
    const ids = (body: { items: { id: number }[] }) => body.items.map((item) => item.id);
    const list = await agents.analyst!.get('/api/reports');
    expect(ids(list.body)).not.toContain(reportId);
    const all = await agents.analyst!.get('/api/reports?includeRetired=1');
    expect(ids(all.body)).toContain(reportId);
    expect(all.body.items.find((item: { id: number }) => item.id === reportId).retired).toBe(true);
    const detail = await agents.analyst!.get(`/api/reports/${reportId}`);
    expect(detail.body.retirement).toMatchObject({
      reason: 'Created from the wrong analysis (invented).',
      retiredBy: 'Test admin',
    });
  });

  it('a signed report, and the analysis and dataset it was made from, cannot be retired', async () => {
    const { datasetId, runId } = await studyWithRun(agents.analyst!);
    const reportId = await createReport(runId);
    const [version] = await world.database.db
      .select({ id: reportVersions.id })
      .from(reportVersions)
      .where(eq(reportVersions.reportId, reportId));
    // Shortcut: the signing flow itself is covered by e-signature.test.ts; here only its outcome
    // (the version's review row in state "signed") matters.
    await world.database.db.insert(reportReviews).values({
      reportVersionId: version!.id,
      organisationId: world.organisationId,
      state: 'signed',
      round: 1,
    });
    const count = () =>
      world.database.db.$count(retirements, eq(retirements.organisationId, world.organisationId));
    const before = await count();
    const report = await retire('analyst', `/api/reports/${reportId}/retire`, 'made by mistake');
    expect(report.status).toBe(409);
    expect(report.body.error.message).toContain('cannot be retired: version 1 is signed');
    const analysis = await retire('analyst', `/api/analyses/${runId}/retire`, 'made by mistake');
    expect(analysis.status).toBe(409);
    expect(analysis.body.error.message).toMatch(/report RL-\d{4}-\d{4} version 1, made from it, is signed/);
    const dataset = await retire('admin', `/api/datasets/${datasetId}/retire`, 'made by mistake');
    expect(dataset.status).toBe(409);
    expect(dataset.body.error.message).toContain('made from it, is signed');
    expect(await count()).toBe(before);
  });
});
