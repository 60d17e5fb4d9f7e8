import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reportVersions } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import {
  createTestWorld,
  csrfFrom,
  signFormHiddenFields,
  signIn,
  type TestWorld,
} from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The per-person inbox (issue 13 §5) through a real review: submitted → the reviewer has it
 * assigned (and the header counts it); returned → the analyst has it returned; submitted again and
 * signed → the analyst sees the signature, the reviewer has nothing left. A member of another
 * organisation, reviewer and analyst at once, sees none of it at any point.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-inbox-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-inbox-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let other: TestWorld;
let smtp: TestSmtp;
let worker: RenderWorker;
let reportNumber: string;
let review: string;
let pdfSha256: string;
const agents: Record<string, Agent> = {};
const storage = reportStorage(reportsDir);

async function post(agent: Agent, target: string, fields: Record<string, unknown>) {
  const page = await agent.get(
    target === '/inbox/read' ? '/inbox' : target.replace(/\/(submit|sign|return)$/, ''),
  );
  return agent
    .post(target)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}

/** The three sections' counts, the header's count and the page, as the person sees them. */
async function inboxOf(agent: Agent) {
  const page = await agent.get('/inbox');
  expect(page.status).toBe(200);
  const count = (id: string) =>
    Number(new RegExp(`data-inbox="${id}"[\\s\\S]*?data-count>(\\d+)<`).exec(page.text)?.[1]);
  const header = /data-inbox-count>(\d+)</.exec(page.text)?.[1];
  return {
    assigned: count('assigned'),
    returned: count('returned'),
    signed: count('signed'),
    header: header === undefined ? 0 : Number(header),
    text: page.text,
  };
}

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer'] });
  smtp = await startTestSmtp(world.database.db);
  worker = await startRenderWorker({
    db: world.database.db,
    queue: openRenderQueue({
      config: parseRenderConfig(),
      connectionString: process.env.DATABASE_URL!,
      supervise: true,
    }),
    storage,
    renderer: createRenderPipeline(),
    log: () => undefined,
  });
  const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!);
  for (const name of ['author', 'reviewer'])
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
  agents.outsider = (
    await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password)
  ).agent;
  const token = csrfFrom((await agents.author!.get('/')).text);
  const created = await agents
    .author!.post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', token)
    .send({});
  const reportId = created.body.reportId as number;
  reportNumber = created.body.reportNumber;
  let version: typeof reportVersions.$inferSelect | undefined;
  const deadline = Date.now() + 60_000;
  while (!(version?.renderStatus === 'ready' && (await storage.hasPdf(version.pdfSha256!)))) {
    if (Date.now() > deadline || version?.renderStatus === 'failed')
      throw new Error('the render did not finish');
    await new Promise((resolve) => setTimeout(resolve, 200));
    [version] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.reportId, reportId));
  }
  pdfSha256 = version!.pdfSha256!;
  review = `/review/reports/${reportId}/versions/1`;
}, 180_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await smtp?.close();
  await world?.close();
  await other?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

const nothing = { assigned: 0, returned: 0, signed: 0, header: 0 };

async function outsiderSeesNothing() {
  const outsider = await inboxOf(agents.outsider!);
  expect(outsider).toMatchObject(nothing);
  expect(outsider.text).not.toContain(reportNumber);
}

describe('the inbox through one review', () => {
  it('before submission nobody has anything', async () => {
    expect(await inboxOf(agents.author!)).toMatchObject(nothing);
    expect(await inboxOf(agents.reviewer!)).toMatchObject(nothing);
    await outsiderSeesNothing();
  });

  it('submitted: the reviewer has it assigned, counted in the header on every page, linking to the review', async () => {
    const submitted = await post(agents.author!, `${review}/submit`, {
      reviewerIds: String(world.users.reviewer!.id),
    });
    expect(submitted.status).toBe(303);
    const reviewer = await inboxOf(agents.reviewer!);
    expect(reviewer).toMatchObject({ assigned: 1, returned: 0, signed: 0, header: 1 });
    expect(reviewer.text).toContain(`href="${review}">${reportNumber} version 1</a>`);
    expect((await agents.reviewer!.get('/studies')).text).toMatch(/data-inbox-count>1</);
    expect(await inboxOf(agents.author!)).toMatchObject(nothing);
    await outsiderSeesNothing();
  });

  it('returned: the analyst has it returned with the comment; the reviewer has nothing left', async () => {
    const returned = await post(agents.reviewer!, `${review}/return`, {
      comment: 'Explain the excluded point.',
    });
    expect(returned.status).toBe(303);
    const author = await inboxOf(agents.author!);
    expect(author).toMatchObject({ assigned: 0, returned: 1, signed: 0, header: 1 });
    expect(author.text).toContain('Explain the excluded point.');
    expect(author.text).toContain(`href="${review}"`);
    expect(await inboxOf(agents.reviewer!)).toMatchObject(nothing);
    await outsiderSeesNothing();
  });

  it('submitted again and signed: the analyst sees who signed with what meaning; nothing waits any more', async () => {
    expect(
      (await post(agents.author!, `${review}/submit`, { reviewerIds: String(world.users.reviewer!.id) }))
        .status,
    ).toBe(303);
    expect(await inboxOf(agents.author!)).toMatchObject(nothing);
    expect(await inboxOf(agents.reviewer!)).toMatchObject({ assigned: 1, header: 1 });
    const signed = await post(agents.reviewer!, `${review}/sign`, {
      meaning: 'Approved',
      identity: world.users.reviewer!.email,
      password: world.users.reviewer!.password,
      reviewedSha256: pdfSha256,
    });
    expect(signed.status).toBe(303);
    const author = await inboxOf(agents.author!);
    // The signature is news: unread, so the header counts it.
    expect(author).toMatchObject({ assigned: 0, returned: 0, signed: 1, header: 1 });
    expect(author.text).toContain('Test reviewer — Approved');
    expect(await inboxOf(agents.reviewer!)).toMatchObject(nothing);
    await outsiderSeesNothing();
  });

  it('read and unread: marking the signature read clears the header count and keeps the item', async () => {
    const before = await inboxOf(agents.author!);
    const key = /data-item="(signed:\d+)" data-read="unread"/.exec(before.text)?.[1];
    expect(key).toBeDefined();
    const marked = await post(agents.author!, '/inbox/read', { item: key });
    expect(marked.status).toBe(303);
    const after = await inboxOf(agents.author!);
    expect(after).toMatchObject({ signed: 1, header: 0 });
    expect(after.text).toContain(`data-item="${key}" data-read="read"`);
    // Marking twice is harmless; a malformed key is refused with a clear 400.
    expect((await post(agents.author!, '/inbox/read', { item: key })).status).toBe(303);
    const bad = await post(agents.author!, '/inbox/read', { item: 'everything' });
    expect(bad.status).toBe(400);
    // The mark is the author's own: the outsider marking the same key changes nothing for anyone.
    expect((await post(agents.outsider!, '/inbox/read', { item: key })).status).toBe(303);
    await outsiderSeesNothing();
  });

  it('the activity list says each event in plain words, keeping the code beside it', async () => {
    const reviewer = await agents.reviewer!.get('/api/activity?limit=50');
    expect(reviewer.status).toBe(200);
    const said = (body: { events: { action: string; summary: string }[] }, action: string) =>
      body.events.find((event) => event.action === action)?.summary;
    expect(said(reviewer.body, 'sign-in')).toBe('Signed in');
    expect(said(reviewer.body, 'review.returned')).toContain('Explain the excluded point.');
    const author = await agents.author!.get('/api/activity?limit=50');
    expect(said(author.body, 'report.created')).toBe(`Report ${reportNumber} created`);
    // No summary is a bare code such as "review.submitted" or "analysis.point-excluded".
    for (const event of [...reviewer.body.events, ...author.body.events])
      expect(event.summary).not.toMatch(/^[a-z-]+\.[a-z.-]+$/);
  });

  it('needs sign-in', async () => {
    const anonymous = await request(world.app).get('/inbox');
    expect(anonymous.status).toBe(303);
  });
});
