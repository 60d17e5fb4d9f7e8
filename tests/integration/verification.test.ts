import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reportVersions, signatures } from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
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
 * The verification page and its upload API on the real database with a really signed PDF: the
 * signed file is recognised (record and seal), one flipped byte makes poppler's `pdfsig` and the
 * page both say it was altered, the unsigned render is named as such, another organisation's
 * member finds no match, and garbage, empty and oversized uploads get clear 4xx answers or a
 * verdict — never a 500.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-verify-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-verify-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let other: TestWorld;
let smtp: TestSmtp;
let worker: RenderWorker;
let reportNumber: string;
let signedPdf: Buffer;
let unsignedPdf: Buffer;
const agents: Record<string, Agent> = {};
const storage = reportStorage(reportsDir);

async function post(agent: Agent, target: string, fields: Record<string, unknown>) {
  const page = await agent.get(target.replace(/\/(submit|sign)$/, ''));
  return agent
    .post(target)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer', 'admin'] });
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
  unsignedPdf = await storage.readPdf(version!.pdfSha256!);
  const review = `/review/reports/${reportId}/versions/1`;
  expect(
    (await post(agents.author!, `${review}/submit`, { reviewerIds: String(world.users.reviewer!.id) }))
      .status,
  ).toBe(303);
  const signed = await post(agents.reviewer!, `${review}/sign`, {
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

async function upload(agent: Agent, bytes: Buffer, name = 'report.pdf') {
  const token = csrfFrom((await agent.get('/verify')).text);
  return agent
    .post('/api/verify')
    .set('x-csrf-token', token)
    .attach('pdf', bytes, { filename: name, contentType: 'application/pdf' });
}

function pdfsig(bytes: Buffer, name: string): string {
  const file = path.join(reportsDir, name);
  writeFileSync(file, bytes);
  try {
    return execFileSync('pdfsig', [file], { encoding: 'utf8', env: { ...process.env, LC_ALL: 'C' } });
  } catch (error) {
    const failed = error as { stdout?: string; stderr?: string };
    return `${failed.stdout ?? ''}${failed.stderr ?? ''}`;
  }
}

describe('verifying an uploaded PDF', () => {
  it('the signed PDF is the signed record: who signed it, when, with what meaning, and the seal verifies', async () => {
    const response = await upload(agents.author!, signedPdf, 'signed.pdf');
    expect(response.status).toBe(200);
    expect(response.body).toMatchObject({
      match: 'signed-record',
      verdictKind: 'verified',
      sha256: sha256Hex(signedPdf),
      seal: { signed: true, valid: true, trusted: true },
      record: { reportNumber, versionNumber: 1 },
    });
    expect(response.body.record.signatures).toEqual([
      expect.objectContaining({ signerName: 'Test reviewer', meaning: 'Approved', timeZone: 'UTC' }),
    ]);
    expect(response.body.record.signatures[0].signedAtText).toMatch(
      /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\+00:00 \(UTC\)$/,
    );
  });

  it('flipping one byte makes pdfsig fail and the page say the file was altered', async () => {
    // pdfsig (poppler-utils) on the untouched file, as the reference.
    expect(pdfsig(signedPdf, 'intact.pdf')).toContain('Signature Validation: Signature is Valid.');
    const altered = Buffer.from(signedPdf);
    const position = Math.floor(altered.length / 3); // inside the original document, covered by the signed byte range
    altered[position] = altered[position]! ^ 0x01;
    expect(sha256Hex(altered)).not.toBe(sha256Hex(signedPdf));
    const verdict = pdfsig(altered, 'altered.pdf');
    expect(verdict).not.toContain('Signature is Valid.');
    expect(verdict).toMatch(/Digest Mismatch|Signature is Invalid/);

    const response = await upload(agents.author!, altered, 'altered.pdf');
    expect(response.status).toBe(200);
    expect(response.body).toMatchObject({
      match: 'no-match',
      verdictKind: 'altered',
      record: null,
      seal: { signed: true, valid: false },
    });
    expect(response.body.verdict).toMatch(/^The file was changed after it was signed: /);
    // Said once (issue 13 §8: it used to read "altered after it was signed: The file was changed…").
    expect(response.body.verdict.match(/after it was signed/g)).toHaveLength(1);
  });

  it('the unsigned render is named as such; another organisation finds no match', async () => {
    const unsigned = await upload(agents.reviewer!, unsignedPdf, 'draft.pdf');
    expect(unsigned.body).toMatchObject({
      match: 'unsigned-version',
      verdictKind: 'unknown',
      seal: { signed: false },
    });
    const outsider = await upload(agents.outsider!, signedPdf, 'signed.pdf');
    expect(outsider.status).toBe(200);
    expect(outsider.body).toMatchObject({ match: 'no-match', record: null });
    expect(outsider.body.verdictKind).not.toBe('verified');
  });

  it('garbage, empty, missing and oversized uploads get a verdict or a clear 4xx, never a 500', async () => {
    const garbage = await upload(agents.author!, Buffer.from('this is not a PDF at all'), 'notes.txt');
    expect(garbage.status).toBe(200);
    expect(garbage.body).toMatchObject({
      match: 'no-match',
      verdictKind: 'unknown',
      seal: { signed: false },
    });
    expect(garbage.body.verdict).toContain('does not match any signed record');
    const truncated = await upload(agents.author!, signedPdf.subarray(0, 2000), 'cut.pdf');
    expect(truncated.status).toBe(200);
    expect(truncated.body.verdictKind).not.toBe('verified');

    const empty = await upload(agents.author!, Buffer.alloc(0), 'empty.pdf');
    expect(empty.status).toBe(400);
    expect(empty.body.error.message).toContain('Choose a PDF file');
    const token = csrfFrom((await agents.author!.get('/verify')).text);
    const none = await agents.author!.post('/api/verify').set('x-csrf-token', token).field('other', 'x');
    expect(none.status).toBe(400);
    const wrongField = await agents
      .author!.post('/api/verify')
      .set('x-csrf-token', token)
      .attach('file', Buffer.from('%PDF-1.7'), 'a.pdf');
    expect(wrongField.status).toBe(400);
    const huge = await upload(agents.author!, Buffer.alloc(25 * 1024 * 1024 + 1, 0x20), 'huge.pdf');
    expect(huge.status).toBe(413);
    expect(huge.body.error.message).toContain('larger than 25 MB');
    const broken = await agents
      .author!.post('/api/verify')
      .set('x-csrf-token', token)
      .set('content-type', 'multipart/form-data; boundary=xyz')
      .send('--xyz\r\nContent-Disposition: form-data; name="pdf"; filename="a.pdf"\r\n\r\nabc');
    expect(broken.status).toBe(400);
    // Without the CSRF header the upload is refused before it is read.
    expect((await agents.author!.post('/api/verify').attach('pdf', signedPdf, 'x.pdf')).status).toBe(403);
    // The server still serves.
    expect((await agents.author!.get('/verify')).status).toBe(200);
  });
});

describe('looking up a report number', () => {
  it('shows the signed versions with signer, meaning and time, and says so when there is no such report', async () => {
    const found = await agents.author!.get(`/verify?report=${reportNumber.toLowerCase()}`);
    expect(found.status).toBe(200);
    expect(found.text).toContain('Test reviewer — Approved');
    expect(found.text).toContain(sha256Hex(signedPdf));
    const missing = await agents.author!.get('/verify?report=RL-1999-0001');
    expect(missing.text).toContain('There is no report “RL-1999-0001” in your organisation.');
    const bad = await agents.author!.get(`/verify?report=${encodeURIComponent('<script>x</script>')}`);
    expect(bad.status).toBe(400);
    expect(bad.text).not.toContain('<script>x</script>');
    expect((await agents.outsider!.get(`/verify?report=${reportNumber}`)).text).toContain(
      'There is no report',
    );
  });
});
