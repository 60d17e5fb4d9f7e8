import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { isoDateTime } from '../../server/features/reports/render/template-format.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import {
  auditEvents,
  organisations,
  reportReviews,
  reportVersions,
  signatures,
  signedOutputs,
  signingLockouts,
} from '../../server/platform/db/schema/index.ts';
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
 * Electronic signing on the real database, with real Chromium rendering of the signed PDF, the
 * real PAdES seal and poppler's pdftotext/pdfsig reading the result. Checks 21 CFR 11.50 (the
 * manifestation: printed name, date and time with zone, meaning — in the PDF), 11.70 (the
 * signature row holds the signed file's SHA-256), 11.200(a)(1)(i) (both identity components on
 * the first signing of a session, the password later), 11.300(d) (failures recorded, signing
 * locked after the organisation's threshold), and segregation of duties.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-esign-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-esign-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;
const ZONE = 'Europe/Berlin';
const THRESHOLD = 3;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let smtp: TestSmtp;
let worker: RenderWorker;
let runId: number;
const agents: Record<string, Agent> = {};
const storage = reportStorage(reportsDir);

beforeAll(async () => {
  world = await createTestWorld(
    { author: ['analyst'], reviewer: ['reviewer'], second: ['reviewer'], admin: ['admin'] },
    { lockoutThreshold: THRESHOLD },
  );
  await world.database.db
    .update(organisations)
    .set({ timeZone: ZONE })
    .where(eq(organisations.id, world.organisationId));
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
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!));
  for (const name of ['author', 'reviewer', 'second'])
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
}, 120_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await smtp?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

const reviewUrl = (reportId: number) => `/review/reports/${reportId}/versions/1`;

/** A new report from the analysis, rendered by the real worker; returns its id and version row. */
async function readyReport() {
  const token = csrfFrom((await agents.author!.get('/')).text);
  const created = await agents
    .author!.post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', token)
    .send({});
  expect(created.status).toBe(201);
  const reportId = created.body.reportId as number;
  const deadline = Date.now() + 60_000;
  for (;;) {
    const [row] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.reportId, reportId));
    if (row?.renderStatus === 'ready' && (await storage.hasPdf(row.pdfSha256!)))
      return { reportId, version: row };
    if (row?.renderStatus === 'failed' || Date.now() > deadline)
      throw new Error(`render ${row?.renderStatus}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

async function post(agent: Agent, url: string, fields: Record<string, unknown>) {
  const page = await agent.get(url.replace(/\/(submit|return|sign)$/, ''));
  return agent
    .post(url)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}

async function submitted(reviewers: string[]) {
  const ready = await readyReport();
  const response = await post(agents.author!, `${reviewUrl(ready.reportId)}/submit`, {
    reviewerIds: reviewers.map((name) => String(world.users[name]!.id)),
  });
  expect(response.status).toBe(303);
  return ready;
}

const events = (action: string, recordId: number) =>
  world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.action, action), eq(auditEvents.recordId, String(recordId))));

const signFields = (name: string, sha: string, extra: Record<string, unknown> = {}) => ({
  meaning: 'Approved',
  comment: 'Checked against the raw data.',
  identity: world.users[name]!.email,
  password: world.users[name]!.password,
  reviewedSha256: sha,
  ...extra,
});

describe('segregation of duties', () => {
  it('the author cannot sign their own report: 403, nothing signed, and the audit event signature.refused-own-report', async () => {
    const { reportId, version } = await submitted(['reviewer']);
    const response = await post(
      agents.author!,
      `${reviewUrl(reportId)}/sign`,
      signFields('author', version.pdfSha256!),
    );
    expect(response.status).toBe(403);
    expect(response.text).toContain('You cannot sign a report you authored');
    const refused = await events('signature.refused-own-report', version.id);
    expect(refused).toHaveLength(1);
    expect(refused[0]).toMatchObject({
      actorUserId: world.users.author!.id,
      organisationId: world.organisationId,
    });
    expect(
      await world.database.db.select().from(signatures).where(eq(signatures.reportVersionId, version.id)),
    ).toEqual([]);
    // The author is not offered the sign form at all.
    const page = await agents.author!.get(reviewUrl(reportId));
    expect(page.text).not.toContain('name="password"');
    expect(page.text).toContain('You authored this version');
  });

  it('a reviewer not assigned to the round can neither sign nor return it (403, recorded)', async () => {
    const { reportId, version } = await submitted(['reviewer']);
    const sign = await post(
      agents.second!,
      `${reviewUrl(reportId)}/sign`,
      signFields('second', version.pdfSha256!),
    );
    expect(sign.status).toBe(403);
    const back = await post(agents.second!, `${reviewUrl(reportId)}/return`, {
      comment: 'Not mine to return.',
    });
    expect(back.status).toBe(403);
    expect(await events('signature.refused-not-assigned', version.id)).toHaveLength(1);
    expect(await events('review.refused-not-assigned', version.id)).toHaveLength(1);
    const [review] = await world.database.db
      .select()
      .from(reportReviews)
      .where(eq(reportReviews.reportVersionId, version.id));
    expect(review!.state).toBe('in_review');
  });
});

describe('signing', () => {
  let signedReportId: number;
  let signedVersionId: number;

  it('the first signing of a session needs the user ID as well as the password', async () => {
    const { reportId, version } = await submitted(['reviewer']);
    signedReportId = reportId;
    signedVersionId = version.id;
    const page = await agents.reviewer!.get(reviewUrl(reportId));
    expect(page.text).toContain('name="identity"');
    expect(page.text).toContain(version.pdfSha256!);
    const response = await post(
      agents.reviewer!,
      `${reviewUrl(reportId)}/sign`,
      signFields('reviewer', version.pdfSha256!, { identity: '' }),
    );
    expect(response.status).toBe(400);
    expect(response.text).toContain('Enter your user ID');
  });

  it('a wrong password is refused, nothing is signed, and the failure is an audit event and a counted attempt', async () => {
    const response = await post(
      agents.reviewer!,
      `${reviewUrl(signedReportId)}/sign`,
      signFields('reviewer', await versionSha(signedVersionId), { password: 'not-my-password' }),
    );
    expect(response.status).toBe(401);
    expect(response.text).toContain('nothing was signed');
    const failed = await events('signature.failed', signedVersionId);
    expect(failed).toHaveLength(1);
    expect(failed[0]!.afterValue).toMatchObject({ reason: 'wrong password', consecutiveFailures: 1 });
    expect(failed[0]!.actorUserId).toBe(world.users.reviewer!.id);
    const [lock] = await world.database.db
      .select()
      .from(signingLockouts)
      .where(eq(signingLockouts.userId, world.users.reviewer!.id));
    expect(lock!.failedAttempts).toBe(1);
    expect(
      await world.database.db
        .select()
        .from(signatures)
        .where(eq(signatures.reportVersionId, signedVersionId)),
    ).toEqual([]);
  });

  it('signs: the signed PDF shows name, meaning and date-time with zone, pdfsig verifies it, and the rows link to its SHA-256', async () => {
    const reviewedSha = await versionSha(signedVersionId);
    const response = await post(
      agents.reviewer!,
      `${reviewUrl(signedReportId)}/sign`,
      signFields('reviewer', reviewedSha),
    );
    expect(response.status).toBe(303);

    const [signature] = await world.database.db
      .select()
      .from(signatures)
      .where(eq(signatures.reportVersionId, signedVersionId));
    expect(signature).toMatchObject({
      signerId: world.users.reviewer!.id,
      signerPrintedName: 'Test reviewer',
      meaning: 'Approved',
      comment: 'Checked against the raw data.',
      timeZone: ZONE,
      reviewedPdfSha256: reviewedSha,
    });
    // The stored time is the database clock to the whole second, so the printed one is the same instant.
    expect(signature!.signedAt.getMilliseconds()).toBe(0);
    const [output] = await world.database.db
      .select()
      .from(signedOutputs)
      .where(eq(signedOutputs.reportVersionId, signedVersionId));
    expect(output).toMatchObject({ pdfSha256: signature!.signedPdfSha256, signatureCount: 1 });
    const [review] = await world.database.db
      .select()
      .from(reportReviews)
      .where(eq(reportReviews.reportVersionId, signedVersionId));
    expect(review!.state).toBe('signed');
    const [lock] = await world.database.db
      .select()
      .from(signingLockouts)
      .where(eq(signingLockouts.userId, world.users.reviewer!.id));
    expect(lock!.failedAttempts).toBe(0);

    const download = await agents
      .reviewer!.get(`${reviewUrl(signedReportId)}/signed.pdf`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });
    expect(download.status).toBe(200);
    const bytes = download.body as Buffer;
    // SHA-256 (FIPS 180-4) of the served bytes is the one the signature row is linked to.
    expect(sha256Hex(bytes)).toBe(signature!.signedPdfSha256);
    const file = path.join(reportsDir, 'downloaded-signed.pdf');
    writeFileSync(file, bytes);
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' });
    const printed = isoDateTime(signature!.signedAt, ZONE);
    // Berlin is UTC+01:00 in winter and +02:00 in summer (IANA tz database).
    expect(printed).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\+0[12]:00$/);
    expect(text).toContain('Test reviewer');
    expect(text).toContain('Approved');
    expect(text).toContain(`${printed} (${ZONE})`);
    expect(text).toContain('Checked against the raw data.');
    expect(text).not.toContain('Signatures are applied when the report is signed');
    // pdfsig (poppler-utils) finds the PAdES signature intact and covering the whole file.
    const pdfsig = execFileSync('pdfsig', [file], { encoding: 'utf8', env: { ...process.env, LC_ALL: 'C' } });
    expect(pdfsig).toContain('Signature Validation: Signature is Valid.');
    expect(pdfsig).toContain('Total document signed');

    const [event] = await events('report.signed', signedVersionId);
    expect(event!.afterValue).toMatchObject({
      meaning: 'Approved',
      signedPdfSha256: signature!.signedPdfSha256,
      reviewedPdfSha256: reviewedSha,
      signedAt: signature!.signedAt.toISOString(),
      identityComponents: ['user ID', 'password'],
    });
    const mail = await smtp.waitForMailTo(world.users.author!.email);
    expect(mail.subject).toMatch(/: signed \(Approved\)/);
  });

  it('a second signing in the same session needs the password only; a new session asks for both again', async () => {
    const { reportId, version } = await submitted(['reviewer']);
    const page = await agents.reviewer!.get(reviewUrl(reportId));
    expect(page.text).not.toContain('name="identity"');
    const response = await post(
      agents.reviewer!,
      `${reviewUrl(reportId)}/sign`,
      signFields('reviewer', version.pdfSha256!, { identity: undefined, meaning: 'Reviewed' }),
    );
    expect(response.status).toBe(303);
    const [event] = await events('report.signed', version.id);
    expect(event!.afterValue).toMatchObject({ identityComponents: ['password'], meaning: 'Reviewed' });

    const fresh = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
      .agent;
    const other = await submitted(['reviewer']);
    expect((await fresh.get(reviewUrl(other.reportId))).text).toContain('name="identity"');
  });

  it('a signed version is locked: a second signature and a return are refused', async () => {
    const sign = await post(
      agents.reviewer!,
      `${reviewUrl(signedReportId)}/sign`,
      signFields('reviewer', await versionSha(signedVersionId)),
    );
    expect(sign.status).toBe(409);
    expect(sign.text).toContain('already signed and locked');
    const back = await post(agents.reviewer!, `${reviewUrl(signedReportId)}/return`, { comment: 'too late' });
    expect(back.status).toBe(409);
  });

  it('the database refuses any change to a signed version, its signature and its signed output, even by SQL', async () => {
    const { db } = world.database;
    const refusals = [
      sql`update report_reviews set state = 'in_review' where report_version_id = ${signedVersionId}`,
      sql`update report_reviews set last_comment = 'edited' where report_version_id = ${signedVersionId}`,
      sql`delete from report_reviews where report_version_id = ${signedVersionId}`,
      sql`update signatures set meaning = 'Reviewed' where report_version_id = ${signedVersionId}`,
      sql`update signatures set created_at = now() - interval '1 day' where report_version_id = ${signedVersionId}`,
      sql`delete from signatures where report_version_id = ${signedVersionId}`,
      sql`update signed_outputs set pdf_sha256 = repeat('0', 64) where report_version_id = ${signedVersionId}`,
      sql`update report_versions set pdf_sha256 = repeat('0', 64) where id = ${signedVersionId}`,
      sql`update review_assignments set reviewer_id = ${world.users.second!.id} where report_version_id = ${signedVersionId}`,
    ];
    // Each is refused by a trigger with SQLSTATE 42501 insufficient_privilege (PostgreSQL
    // Appendix A error codes), not by some other error such as a typo in the statement.
    const codes: string[] = [];
    for (const statement of refusals) {
      const error = await db.execute(statement).then(
        () => null,
        (failure: { code?: string; cause?: { code?: string } }) => failure,
      );
      codes.push(error?.cause?.code ?? error?.code ?? 'accepted');
    }
    expect(codes).toEqual(refusals.map(() => '42501'));
    const [signature] = await db
      .select()
      .from(signatures)
      .where(eq(signatures.reportVersionId, signedVersionId));
    expect(signature!.meaning).toBe('Approved');
  });
});

describe('lockout after repeated failures (21 CFR 11.300(d))', () => {
  it(`locks signing after ${THRESHOLD} failures in a row, refuses even the right password, tells the admins — and sign-in still works`, async () => {
    const { reportId, version } = await submitted(['second']);
    const url = `${reviewUrl(reportId)}/sign`;
    const statuses: number[] = [];
    for (let attempt = 0; attempt < THRESHOLD; attempt += 1)
      statuses.push(
        (
          await post(
            agents.second!,
            url,
            signFields('second', version.pdfSha256!, { password: `wrong-${attempt}` }),
          )
        ).status,
      );
    expect(statuses).toEqual([401, 401, 423]);
    expect(await events('signature.failed', version.id)).toHaveLength(THRESHOLD);
    expect(await events('signature.locked', world.users.second!.id)).toHaveLength(1);
    const right = await post(agents.second!, url, signFields('second', version.pdfSha256!));
    expect(right.status).toBe(423);
    expect(await events('signature.refused-locked', version.id)).toHaveLength(1);
    expect(
      await world.database.db.select().from(signatures).where(eq(signatures.reportVersionId, version.id)),
    ).toEqual([]);
    const alert = await smtp.waitForMailTo(world.users.admin!.email);
    expect(alert.subject).toContain('Signing locked for Test second');
    // Only signing is locked: the account can still sign in.
    const again = await signIn(world.app, world.users.second!.email, world.users.second!.password);
    expect(again.response.status).toBe(303);
    expect(again.response.headers.location).toBe('/');
  });
});

async function versionSha(versionId: number) {
  const [row] = await world.database.db.select().from(reportVersions).where(eq(reportVersions.id, versionId));
  return row!.pdfSha256!;
}
