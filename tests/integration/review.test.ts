import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { and, eq, sql } from 'drizzle-orm';
import type { PgTable } from 'drizzle-orm/pg-core';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkAuditChain } from '../../server/features/audit-viewer/audit-viewer.ts';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { reviewPageModel } from '../../server/features/review/review-page-model.ts';
import { loadReviewVersion, openReviewRecord } from '../../server/features/review/review-version.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { verifyAuditChain } from '../../server/platform/audit/audit-trail.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import type { Transaction } from '../../server/platform/db/client.ts';
import {
  auditEvents,
  reportReviews,
  reportVersions,
  reviewAssignments,
  signatures,
  signedOutputs,
  signingLockouts,
} from '../../server/platform/db/schema/index.ts';
import { mailConfig } from '../../server/platform/mail/mail-config.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { openSuperuserDatabase } from '../support/superuser.ts';
import {
  createTestWorld,
  csrfFrom,
  signFormHiddenFields,
  signIn,
  type TestWorld,
} from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The review workflow on the real database: draft → in review → returned → in review (round 2)
 * → signed, with the rules enforced on the server (only the author submits, to eligible
 * reviewers, never to themselves; only assigned reviewers act; a comment is required to return),
 * mail to the right people after each step, a new render starting its own draft, and the audit
 * export holding every event of the flow in order with a chain check that passes — and fails at
 * exactly the row tampered with as the owner role.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let smtp: TestSmtp;
let worker: RenderWorker;
let runId: number;
let reportId: number;
let versionId: number;
const agents: Record<string, Agent> = {};
const storage = reportStorage(reportsDir);

beforeAll(async () => {
  world = await createTestWorld({
    author: ['analyst', 'reviewer'],
    colleague: ['analyst'],
    first: ['reviewer'],
    second: ['reviewer', 'admin'],
  });
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
  for (const name of Object.keys(world.users))
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

const url = (version = 1) => `/review/reports/${reportId}/versions/${version}`;
const id = (name: string) => String(world.users[name]!.id);

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

const reviewRow = async () =>
  (
    await world.database.db.select().from(reportReviews).where(eq(reportReviews.reportVersionId, versionId))
  )[0];
const review = async () => (await reviewRow())!;

describe('the review workflow', () => {
  it('a ready version starts in draft; only its author may submit it', async () => {
    const token = csrfFrom((await agents.author!.get('/')).text);
    const created = await agents
      .author!.post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', token)
      .send({});
    reportId = created.body.reportId;
    versionId = (await waitReady(1)).id;
    const page = await agents.author!.get(url());
    expect(page.status).toBe(200);
    expect(page.text).toContain('data-review-state="draft"');
    expect(page.text).toContain('Submit for review');
    // Another analyst of the organisation is not the author; a reviewer-only member has no analyst role.
    expect((await post(agents.colleague!, `${url()}/submit`, { reviewerIds: id('first') })).status).toBe(403);
    expect((await post(agents.first!, `${url()}/submit`, { reviewerIds: id('second') })).status).toBe(403);
    // A refused submission writes nothing: the version has no review row until it is submitted.
    expect(await reviewRow()).toBeUndefined();
  });

  it('offers only other reviewers, refuses an empty choice and the author themselves', async () => {
    const page = await agents.author!.get(url());
    expect(page.text).toContain(`value="${id('first')}"`);
    expect(page.text).toContain(`value="${id('second')}"`);
    expect(page.text).not.toContain(`value="${id('author')}"`); // holds the reviewer role, but authored it
    const none = await post(agents.author!, `${url()}/submit`, {});
    expect(none.status).toBe(400);
    expect(none.text).toContain('Choose at least one reviewer.');
    const self = await post(agents.author!, `${url()}/submit`, { reviewerIds: [id('first'), id('author')] });
    expect(self.status).toBe(400);
    expect(self.text).toContain('You cannot review your own report');
    expect(await reviewRow()).toBeUndefined();
    expect(
      await world.database.db
        .select()
        .from(reviewAssignments)
        .where(eq(reviewAssignments.reportVersionId, versionId)),
    ).toEqual([]);
  });

  it('submitting puts it in review (round 1), assigns the reviewers and mails each a link to the review page', async () => {
    const response = await post(agents.author!, `${url()}/submit`, {
      reviewerIds: [id('first'), id('second')],
      note: 'Please check batch B2.',
    });
    expect(response.status).toBe(303);
    expect(response.headers.location).toBe(url());
    expect(await review()).toMatchObject({
      state: 'in_review',
      round: 1,
      submittedBy: world.users.author!.id,
    });
    for (const name of ['first', 'second']) {
      const mail = await smtp.waitForMailTo(world.users[name]!.email);
      expect(mail.subject).toMatch(/: review requested/);
      expect(mail.textBody).toContain(`${mailConfig().publicUrl}${url()}`);
      expect(mail.textBody).toContain('Please check batch B2.');
      const queue = await agents[name]!.get('/review');
      expect(queue.text).toContain(`href="${url()}"`);
    }
    expect((await agents.author!.get('/review')).text).not.toContain(`href="${url()}"`);
    expect((await post(agents.author!, `${url()}/submit`, { reviewerIds: id('first') })).status).toBe(409);
  });

  it('returning needs a comment; with one it goes back to the author, who is told by mail', async () => {
    const empty = await post(agents.first!, `${url()}/return`, { comment: '   ' });
    expect(empty.status).toBe(400);
    expect(empty.text).toContain('Write what the author should correct.');
    expect((await review()).state).toBe('in_review');
    const response = await post(agents.first!, `${url()}/return`, {
      comment: 'The 40 °C series needs the excluded point explained.',
    });
    expect(response.status).toBe(303);
    expect(await review()).toMatchObject({
      state: 'returned',
      lastComment: 'The 40 °C series needs the excluded point explained.',
    });
    const mail = await smtp.waitForMailTo(world.users.author!.email);
    expect(mail.subject).toMatch(/: returned by Test first/);
    expect(mail.textBody).toContain('The 40 °C series needs the excluded point explained.');
    expect((await agents.author!.get('/review')).text).toContain(`href="${url()}"`);
  });

  it('resubmitting starts round 2 with its own reviewers; a round-1 reviewer no longer may act', async () => {
    const response = await post(agents.author!, `${url()}/submit`, { reviewerIds: id('second') });
    expect(response.status).toBe(303);
    expect(await review()).toMatchObject({ state: 'in_review', round: 2 });
    const rounds = await world.database.db
      .select()
      .from(reviewAssignments)
      .where(eq(reviewAssignments.reportVersionId, versionId));
    expect(rounds.map((row) => [row.round, row.reviewerId]).sort()).toEqual(
      [
        [1, world.users.first!.id],
        [1, world.users.second!.id],
        [2, world.users.second!.id],
      ].sort(),
    );
    expect((await post(agents.first!, `${url()}/return`, { comment: 'again' })).status).toBe(403);
    expect((await agents.first!.get('/review')).text).not.toContain(`href="${url()}"`);
  });

  it('the assigned reviewer signs; the author is told; a new render of the report starts its own draft', async () => {
    const [version] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.id, versionId));
    const response = await post(agents.second!, `${url()}/sign`, {
      meaning: 'Reviewed',
      identity: world.users.second!.email,
      password: world.users.second!.password,
      reviewedSha256: version!.pdfSha256,
    });
    expect(response.status).toBe(303);
    expect((await review()).state).toBe('signed');
    const page = await agents.author!.get(url());
    expect(page.text).toContain('data-review-state="signed"');
    expect(page.text).toContain('Download the signed PDF');
    expect(page.text).not.toContain('Submit for review');

    const token = csrfFrom((await agents.author!.get('/')).text);
    const again = await agents
      .author!.post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', token)
      .send({});
    expect(again.status).toBe(201);
    await waitReady(2);
    expect((await agents.author!.get(url(2))).text).toContain('data-review-state="draft"');
    expect((await agents.author!.get(url(1))).text).toContain('data-review-state="signed"');
  });
});

describe('the audit trail of the flow', () => {
  it('the CSV export holds every event of the flow, in order', async () => {
    const csv = await agents.second!.get('/audit/export.csv');
    expect(csv.status).toBe(200);
    const rows = parse(csv.text, { columns: true }) as Record<string, string>[];
    const flow = rows.filter(
      (row) => row.record_type === 'report_version' && row.record_id === String(versionId),
    );
    expect(flow.map((row) => row.action)).toEqual([
      'report-version.created',
      'report-version.rendered',
      'review.submitted',
      'review.returned',
      'review.submitted',
      'review.refused-not-assigned', // the round-1 reviewer's late attempt to return it
      'report.signed',
    ]);
    const ids = flow.map((row) => Number(row.id));
    expect([...ids].sort((a, b) => a - b)).toEqual(ids);
    const signed = JSON.parse(flow.at(-1)!.after!) as Record<string, unknown>;
    expect(signed).toMatchObject({ meaning: 'Reviewed', signerPrintedName: 'Test second', state: 'signed' });
    expect(rows.some((row) => row.action === 'report.created' && row.record_id === String(reportId))).toBe(
      true,
    );
  });

  it('the chain check passes, then fails at exactly the row tampered with as the owner role (rolled back)', async () => {
    const form = await agents.second!.get('/audit/chain');
    const run = await agents
      .second!.post('/audit/chain')
      .type('form')
      .send({ _csrf: csrfFrom(form.text) });
    expect(run.status).toBe(303);
    expect((await agents.second!.get(run.headers.location!)).text).toContain('The chain is intact');

    const [returned] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.action, 'review.returned'), eq(auditEvents.recordId, String(versionId))));
    const actor: SessionUser = {
      id: world.users.second!.id,
      email: world.users.second!.email,
      fullName: 'Test second',
      organisationId: world.organisationId,
      organisationName: 'test',
      roles: ['reviewer', 'admin'],
    };
    let outcome: Awaited<ReturnType<typeof checkAuditChain>> | undefined;
    const superuser = await openSuperuserDatabase();
    await superuser.db
      .transaction(async (tx) => {
        // A superuser may switch the append-only trigger off for its own transaction.
        await tx.execute(sql`set local session_replication_role = replica`);
        await tx.execute(
          sql`update audit_events set after_value = jsonb_set(after_value, '{comment}', '"All fine."') where id = ${returned!.id}`,
        );
        outcome = await checkAuditChain(tx, actor, { test: 'tamper' });
        tx.rollback();
      })
      .catch(() => undefined) // drizzle signals the rollback by throwing
      .finally(() => superuser.close());
    expect(outcome).toMatchObject({
      ok: false,
      firstBrokenLink: { id: returned!.id, reason: 'content does not match its stored hash' },
    });
    expect((await verifyAuditChain(world.database.db)).ok).toBe(true);
  });
});

describe('reading the review page', () => {
  let freshReportId: number;

  /** Rows of every table a review step writes, and of the audit trail. */
  async function rowCounts() {
    const { db } = world.database;
    const count = async (table: PgTable) =>
      (await db.select({ n: sql<number>`count(*)::int` }).from(table))[0]!.n;
    return {
      reportReviews: await count(reportReviews),
      reviewAssignments: await count(reviewAssignments),
      signatures: await count(signatures),
      signedOutputs: await count(signedOutputs),
      signingLockouts: await count(signingLockouts),
      auditEvents: await count(auditEvents),
    };
  }

  it('GET of the review page leaves the database unchanged, for a version never looked at before', async () => {
    const token = csrfFrom((await agents.author!.get('/')).text);
    const created = await agents
      .author!.post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', token)
      .send({});
    expect(created.status).toBe(201);
    freshReportId = created.body.reportId as number;
    const deadline = Date.now() + 60_000;
    for (;;) {
      const [row] = await world.database.db
        .select()
        .from(reportVersions)
        .where(eq(reportVersions.reportId, freshReportId));
      if (row?.renderStatus === 'ready' && (await storage.hasPdf(row.pdfSha256!))) break;
      if (row?.renderStatus === 'failed' || Date.now() > deadline)
        throw new Error(`render ${row?.renderStatus}`);
      await new Promise((resolve) => setTimeout(resolve, 200));
    }
    const fresh = `/review/reports/${freshReportId}/versions/1`;

    const before = await rowCounts();
    const authorPage = await agents.author!.get(fresh);
    expect(authorPage.status).toBe(200);
    expect(authorPage.text).toContain('data-review-state="draft"');
    expect(authorPage.text).toContain('Submit for review');
    const reviewerPage = await agents.first!.get(fresh);
    expect(reviewerPage.status).toBe(200);
    expect(reviewerPage.text).toContain('data-review-state="draft"');
    expect((await agents.first!.get(`${fresh}/signed.pdf`)).status).toBe(404);
    expect((await agents.second!.get(url(1))).text).toContain('data-review-state="signed"');
    expect((await agents.second!.get('/review')).status).toBe(200);
    expect(await rowCounts()).toEqual(before);
  });

  /** Runs `read` in a READ ONLY transaction: PostgreSQL refuses any write there with SQLSTATE 25006. */
  async function readOnly<T>(read: (tx: Transaction) => Promise<T>): Promise<T> {
    return world.database.db.transaction(read, { accessMode: 'read only' });
  }
  const sqlState = (error: unknown) =>
    (error as { cause?: { code?: string }; code?: string }).cause?.code ?? (error as { code?: string }).code;

  it('loadReviewVersion and the page model do not write: they run in a READ ONLY transaction, where a write is refused', async () => {
    const { organisationId } = world;
    const never = { reportId: freshReportId, versionNumber: 1 };
    const signed = { reportId, versionNumber: 1 };
    const reviewer: SessionUser = {
      id: world.users.first!.id,
      email: world.users.first!.email,
      fullName: 'Test first',
      organisationId,
      organisationName: 'test',
      roles: ['reviewer'],
    };
    const neverLooked = await readOnly((tx) => loadReviewVersion(tx, organisationId, never));
    expect(neverLooked.review).toMatchObject({ state: 'draft', round: 0 });
    expect((await readOnly((tx) => loadReviewVersion(tx, organisationId, signed))).review.state).toBe(
      'signed',
    );
    for (const target of [never, signed]) {
      const model = await readOnly((db) => reviewPageModel({ db, actor: reviewer, target, session: {} }));
      expect(model.version.number).toBe(1);
    }
    // The check can fail: the one write of the review record, in the same kind of transaction.
    const write = await readOnly((tx) => openReviewRecord(tx, neverLooked)).catch((error: unknown) => error);
    expect(sqlState(write)).toBe('25006');
    expect(
      await world.database.db
        .select()
        .from(reportReviews)
        .where(eq(reportReviews.reportVersionId, neverLooked.version.id)),
    ).toEqual([]);
  });
});
