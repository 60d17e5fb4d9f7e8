import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq } from 'drizzle-orm';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reportVersions, signedOutputs, users } from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
import {
  createTestWorld,
  csrfFrom,
  signFormHiddenFields,
  signIn,
  type TestWorld,
} from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Issue 13 §3: a version's review standing (draft, in review, returned, signed, superseded) is
 * shown beside its render state in the report list, the report's detail, its review page and the
 * dashboard, and the list filters by it. Once signed, "Download PDF" gives the sealed PDF; the
 * unsigned rendition stays under its own address. A new render of a signed report starts its own
 * review, and the signed version reads "superseded by v2" only once v2 is signed. Negatives: a
 * reviewer of another organisation sees none of it; a deactivated reviewer cannot sign.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-standing-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-standing-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let other: TestWorld;
let worker: RenderWorker;
let runId: number;
let reportId: number;
const agents: Record<string, Agent> = {};
let outsider: Agent;
const storage = reportStorage(reportsDir);

beforeAll(async () => {
  world = await createTestWorld({
    author: ['analyst'],
    signer: ['reviewer'],
    leaver: ['reviewer'],
  });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer', 'admin'] });
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
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!));
  for (const name of Object.keys(world.users))
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
  outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password)).agent;
}, 120_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await other?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

const reviewUrl = (version: number) => `/review/reports/${reportId}/versions/${version}`;

async function waitReady(versionNumber: number) {
  const deadline = Date.now() + 60_000;
  for (;;) {
    const [row] = await world.database.db
      .select()
      .from(reportVersions)
      .where(and(eq(reportVersions.reportId, reportId), eq(reportVersions.versionNumber, versionNumber)));
    if (row?.renderStatus === 'ready' && (await storage.hasPdf(row.pdfSha256!))) return row;
    if (row?.renderStatus === 'failed' || Date.now() > deadline)
      throw new Error(`render ${row?.renderStatus}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

async function post(agent: Agent, target: string, fields: Record<string, unknown>) {
  const page = await agent.get(target.replace(/\/(submit|return|sign)$/, ''));
  return agent
    .post(target)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}

async function submitAndSign(version: number, pdfSha256: string) {
  const submitted = await post(agents.author!, `${reviewUrl(version)}/submit`, {
    reviewerIds: String(world.users.signer!.id),
  });
  expect(submitted.status).toBe(303);
  const signed = await post(agents.signer!, `${reviewUrl(version)}/sign`, {
    meaning: 'Reviewed',
    identity: world.users.signer!.email,
    password: world.users.signer!.password,
    reviewedSha256: pdfSha256,
  });
  expect(signed.status).toBe(303);
}

const detail = async () => (await agents.author!.get(`/api/reports/${reportId}`).expect(200)).body;
const versionOf = async (number: number) =>
  (await detail()).versions.find((version: { versionNumber: number }) => version.versionNumber === number);
const listed = async (query: string) =>
  (await agents.author!.get(`/api/reports?${query}`).expect(200)).body.items.map(
    (item: { id: number }) => item.id,
  );

async function download(url: string) {
  const response = await agents.author!.get(url).buffer(true);
  expect(response.status).toBe(200);
  return { sha256: sha256Hex(response.body as Buffer), disposition: response.headers['content-disposition'] };
}

describe('review standing beside render state', () => {
  it('a freshly rendered version is Ready and a Draft, in the list, the detail, the dashboard and the filter', async () => {
    const token = csrfFrom((await agents.author!.get('/')).text);
    const created = await agents
      .author!.post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', token)
      .send({});
    reportId = created.body.reportId;
    await waitReady(1);
    const item = (await agents.author!.get('/api/reports').expect(200)).body.items.find(
      (row: { id: number }) => row.id === reportId,
    );
    expect(item.latest).toMatchObject({ renderStatus: 'ready', reviewState: 'draft' });
    expect(await versionOf(1)).toMatchObject({
      reviewState: 'draft',
      supersededBy: null,
      signedPdfSha256: null,
    });
    expect(await listed('review=draft')).toContain(reportId);
    expect(await listed('review=signed')).not.toContain(reportId);
    const dashboard = await agents.author!.get('/').expect(200);
    expect(dashboard.text).toMatch(
      /data-status="ready">Ready<\/td>\s*<td[^>]*data-review-state="draft">Draft</,
    );
  });

  it('once signed, "Download PDF" is the sealed PDF and the rendition keeps its own address', async () => {
    const v1 = await waitReady(1);
    await submitAndSign(1, v1.pdfSha256!);
    const [sealed] = await world.database.db
      .select()
      .from(signedOutputs)
      .where(eq(signedOutputs.reportVersionId, v1.id));
    const summary = await versionOf(1);
    expect(summary).toMatchObject({
      reviewState: 'signed',
      signedPdfSha256: sealed!.pdfSha256,
      supersededBy: null,
    });
    const current = await download(summary.pdfUrl);
    expect(current.sha256).toBe(sealed!.pdfSha256);
    expect(current.disposition).toContain('-v1-signed.pdf');
    const rendition = await download(summary.renditionUrl);
    expect(rendition.sha256).toBe(v1.pdfSha256);
    expect(rendition.disposition).toContain('-v1-unsigned.pdf');
    expect(sealed!.pdfSha256).not.toBe(v1.pdfSha256);
    expect(await listed('review=signed')).toContain(reportId);
    expect((await agents.author!.get('/')).text).toContain('data-review-state="signed">Signed<');
  }, 120_000);

  it('a new render of the signed report starts its own review; v1 stays signed until v2 is signed', async () => {
    const token = csrfFrom((await agents.author!.get('/')).text);
    await agents
      .author!.post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', token)
      .send({})
      .expect(201);
    const v2 = await waitReady(2);
    expect(await versionOf(2)).toMatchObject({ reviewState: 'draft' });
    expect(await versionOf(1)).toMatchObject({ reviewState: 'signed', supersededBy: null });
    // The filter counts a report with a signed version even while its latest is a draft.
    expect(await listed('review=signed')).toContain(reportId);
    expect((await agents.author!.get(reviewUrl(1))).text).not.toContain('Superseded by');

    await submitAndSign(2, v2.pdfSha256!);
    expect(await versionOf(1)).toMatchObject({ reviewState: 'superseded', supersededBy: 2 });
    expect(await versionOf(2)).toMatchObject({ reviewState: 'signed', supersededBy: null });
    expect((await agents.author!.get(reviewUrl(1))).text).toContain('Superseded by v2');
    expect(await listed('review=superseded')).toContain(reportId);
    // The superseded version's download is still its own sealed PDF.
    const [sealed] = await world.database.db
      .select()
      .from(signedOutputs)
      .where(eq(signedOutputs.reportVersionId, (await waitReady(1)).id));
    expect((await download((await versionOf(1)).pdfUrl)).sha256).toBe(sealed!.pdfSha256);
  }, 180_000);
});

describe('negatives', () => {
  it('a reviewer of another organisation sees neither the standing nor either PDF', async () => {
    expect((await outsider.get(`/api/reports/${reportId}`)).status).toBe(404);
    expect((await outsider.get(`/api/reports/${reportId}/versions/1/pdf`)).status).toBe(404);
    expect((await outsider.get(`/api/reports/${reportId}/versions/1/rendition.pdf`)).status).toBe(404);
    expect((await outsider.get(`/api/reports?review=signed`)).body.items).toEqual([]);
    expect((await outsider.get(`/review/reports/${reportId}/versions/1/signed.pdf`)).status).toBe(404);
  });

  it('a reviewer deactivated after assignment cannot sign; the version stays in review', async () => {
    const token = csrfFrom((await agents.author!.get('/')).text);
    await agents
      .author!.post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', token)
      .send({})
      .expect(201);
    const v3 = await waitReady(3);
    const submitted = await post(agents.author!, `${reviewUrl(3)}/submit`, {
      reviewerIds: String(world.users.leaver!.id),
    });
    expect(submitted.status).toBe(303);
    const page = await agents.leaver!.get(reviewUrl(3));
    await world.database.db.update(users).set({ active: false }).where(eq(users.id, world.users.leaver!.id));
    const refused = await agents
      .leaver!.post(`${reviewUrl(3)}/sign`)
      .type('form')
      .send({
        _csrf: csrfFrom(page.text),
        ...signFormHiddenFields(page.text),
        meaning: 'Reviewed',
        identity: world.users.leaver!.email,
        password: world.users.leaver!.password,
        reviewedSha256: v3.pdfSha256,
      });
    // The deactivated account's session no longer counts: the form is sent back to sign-in.
    expect(refused.status).toBe(303);
    expect(refused.headers.location).toMatch(/^\/signin/);
    expect(await versionOf(3)).toMatchObject({ reviewState: 'in_review', signedPdfSha256: null });
    expect((await versionOf(2)).reviewState).toBe('signed');
  }, 120_000);
});
