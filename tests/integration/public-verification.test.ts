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
import { PUBLIC_CHECK_LIMIT } from '../../server/features/verification/index.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reports, reportVersions, sessions, signatures } from '../../server/platform/db/schema/index.ts';
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
 * The public check page (issue 13 §7) on the real database with a really signed PDF, used by an
 * anonymous visitor: the sealed file is "yes" with its report number, version, signer, meaning and
 * time; one flipped byte and the unsigned rendition are "no"; garbage, empty and oversized files
 * get a clear 4xx; the page leaks neither the organisation's name nor the report title; a missing
 * token is refused; the limit per client answers 429; and no visit writes a session row.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-public-check-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-public-check-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let smtp: TestSmtp;
let worker: RenderWorker;
let reportNumber: string;
let reportTitle: string;
let signedPdf: Buffer;
let unsignedPdf: Buffer;
let sessionsBefore: Set<string>;
let checks = 0;
const storage = reportStorage(reportsDir);

const sessionIds = async () =>
  new Set((await world.database.db.select({ sid: sessions.sid }).from(sessions)).map((row) => row.sid));

async function post(agent: Agent, target: string, fields: Record<string, unknown>) {
  const page = await agent.get(target.replace(/\/(submit|sign)$/, ''));
  return agent
    .post(target)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], reviewer: ['reviewer'] });
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
  const author = (await signIn(world.app, world.users.author!.email, world.users.author!.password)).agent;
  const reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
    .agent;
  const token = csrfFrom((await author.get('/')).text);
  const created = await author.post(`/api/analyses/${runId}/reports`).set('x-csrf-token', token).send({});
  const reportId = created.body.reportId as number;
  reportNumber = created.body.reportNumber;
  const [report] = await world.database.db
    .select({ title: reports.title })
    .from(reports)
    .where(eq(reports.id, reportId));
  reportTitle = report!.title;
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
  unsignedPdf = await storage.readPdf(version!.pdfSha256!);
  const review = `/review/reports/${reportId}/versions/1`;
  expect(
    (await post(author, `${review}/submit`, { reviewerIds: String(world.users.reviewer!.id) })).status,
  ).toBe(303);
  const signed = await post(reviewer, `${review}/sign`, {
    meaning: 'Approved',
    identity: world.users.reviewer!.email,
    password: world.users.reviewer!.password,
    reviewedSha256: version!.pdfSha256,
  });
  expect(signed.status).toBe(303);
  const [signature] = await world.database.db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, version!.id));
  signedPdf = await storage.readPdf(signature!.signedPdfSha256!);
  sessionsBefore = await sessionIds();
}, 180_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await smtp?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

/** An anonymous visitor opens the page and posts one file through its form. */
async function check(bytes: Buffer, name = 'report.pdf') {
  const visitor = request.agent(world.app);
  const page = await visitor.get('/check-a-pdf');
  expect(page.status).toBe(200);
  checks += 1;
  return visitor
    .post('/check-a-pdf')
    .field('_csrf', csrfFrom(page.text))
    .attach('pdf', bytes, { filename: name, contentType: 'application/pdf' });
}

describe('the public check page, anonymous', () => {
  it('the sealed PDF: yes, with report number, version, signer, meaning and time — and nothing about the organisation', async () => {
    const response = await check(signedPdf, 'signed.pdf');
    expect(response.status).toBe(200);
    expect(response.text).toContain('data-check-result="sealed"');
    expect(response.text).toContain(`Yes: this is report ${reportNumber}, version 1`);
    expect(response.text).toMatch(
      /Signed by Test reviewer — meaning: Approved — <span class="tabular-nums">\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\+00:00 \(UTC\)<\/span>/,
    );
    // The organisation's name and the report's title are not repeated from the database.
    expect(response.text).not.toContain('Test Laboratory');
    expect(reportTitle.length).toBeGreaterThan(0);
    expect(response.text).not.toContain(reportTitle);
  });

  it('one flipped byte: no', async () => {
    const altered = Buffer.from(signedPdf);
    const position = Math.floor(altered.length / 3);
    altered[position] = altered[position]! ^ 0x01;
    const response = await check(altered, 'altered.pdf');
    expect(response.status).toBe(200);
    expect(response.text).toContain('data-check-result="not-sealed"');
    expect(response.text).not.toContain(reportNumber);
  });

  it('the unsigned rendition: no, without saying that a draft of that number exists', async () => {
    const response = await check(unsignedPdf, 'draft.pdf');
    expect(response.status).toBe(200);
    expect(response.text).toContain('data-check-result="not-sealed"');
    expect(response.text).not.toContain(reportNumber);
  });

  it('garbage, empty, oversized and malformed uploads get a clear 4xx, never a 500', async () => {
    const garbage = await check(Buffer.from('this is not a PDF at all'), 'notes.txt');
    expect(garbage.status).toBe(422);
    expect(garbage.text).toContain('This file is not a PDF');
    const empty = await check(Buffer.alloc(0), 'empty.pdf');
    expect(empty.status).toBe(400);
    expect(empty.text).toContain('the upload was empty');
    const huge = await check(Buffer.alloc(25 * 1024 * 1024 + 1, 0x20), 'huge.pdf');
    expect(huge.status).toBe(413);
    expect(huge.text).toContain('larger than 25 MB');
    checks += 1;
    const broken = await request(world.app)
      .post('/check-a-pdf')
      .set('content-type', 'multipart/form-data; boundary=xyz')
      .send('--xyz\r\nContent-Disposition: form-data; name="pdf"; filename="a.pdf"\r\n\r\nabc');
    expect(broken.status).toBe(400);
  });

  it('refuses a post without the anonymous form token, or with another browser’s', async () => {
    checks += 1;
    const bare = await request(world.app).post('/check-a-pdf').attach('pdf', signedPdf, 'x.pdf');
    expect(bare.status).toBe(403);
    expect(bare.text).not.toContain('data-check-result');
    const other = request.agent(world.app);
    const token = csrfFrom((await other.get('/check-a-pdf')).text);
    checks += 1;
    const crossed = await request(world.app)
      .post('/check-a-pdf')
      .field('_csrf', token)
      .attach('pdf', signedPdf, 'x.pdf');
    expect(crossed.status).toBe(403);
  });

  it('the signed-in verification page still needs sign-in, and the public one works signed in too', async () => {
    expect((await request(world.app).get('/verify')).status).toBe(303);
    // Every anonymous view and check so far left no session row.
    expect([...(await sessionIds())].filter((sid) => !sessionsBefore.has(sid))).toEqual([]);
    const { agent } = await signIn(world.app, world.users.author!.email, world.users.author!.password);
    const page = await agent.get('/check-a-pdf');
    checks += 1;
    const signedIn = await agent
      .post('/check-a-pdf')
      .field('_csrf', csrfFrom(page.text))
      .attach('pdf', signedPdf, 'signed.pdf');
    expect(signedIn.status).toBe(200);
    expect(signedIn.text).toContain('data-check-result="sealed"');
    sessionsBefore = await sessionIds();
  });

  it('answers 429 once a client has used up its checks', async () => {
    expect(checks).toBeLessThan(PUBLIC_CHECK_LIMIT);
    while (checks < PUBLIC_CHECK_LIMIT) {
      const response = await check(Buffer.from('not a pdf'), 'x.txt');
      expect(response.status).toBe(422);
    }
    const refused = await check(signedPdf, 'signed.pdf');
    expect(refused.status).toBe(429);
    expect(refused.text).toContain('Too many checks');
    expect(refused.text).not.toContain('data-check-result');
  });

  it('no anonymous view or check wrote a session row', async () => {
    const after = await sessionIds();
    expect([...after].filter((sid) => !sessionsBefore.has(sid))).toEqual([]);
    // The count is real: signing in stores a session.
    await signIn(world.app, world.users.author!.email, world.users.author!.password);
    expect([...(await sessionIds())].filter((sid) => !sessionsBefore.has(sid))).toHaveLength(1);
  });
});
