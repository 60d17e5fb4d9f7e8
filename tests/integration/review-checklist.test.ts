import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, desc, eq } from 'drizzle-orm';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { auditEvents, reviewChecklists, signatures } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import {
  createTestWorld,
  csrfFrom,
  signFormHiddenFields,
  signIn,
  type TestWorld,
} from '../support/test-app.ts';
import { startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The review checklist (Rateledger issue 13 §4): an admin keeps it as write-once versions with a
 * reason and an audit event; a reviewer confirms every item of the current version to sign
 * (400 otherwise, 409 when the form showed an older version); the confirmed items are stored with
 * the signature and printed on the signed PDF's signatures page (21 CFR 11.50), read back with
 * poppler's pdftotext.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-checklist-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-checklist-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let worker: RenderWorker;
let runId: number;
const agents: Record<string, Agent> = {};
const storage = reportStorage(reportsDir);

const FIRST_ITEMS = ['Raw data checked against the notebook', 'Every excluded point has a reason'];
const SECOND_ITEMS = [...FIRST_ITEMS, 'Shelf-life claim matches the protocol'];

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], reviewer: ['reviewer'], admin: ['admin'] });
  worker = await startTestRenderWorker(world.database.db, storage);
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!));
  for (const name of ['author', 'reviewer', 'admin'])
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
}, 120_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

const PAGE = '/admin/review-checklist';

const versions = () =>
  world.database.db
    .select()
    .from(reviewChecklists)
    .where(eq(reviewChecklists.organisationId, world.organisationId))
    .orderBy(desc(reviewChecklists.versionNumber));

async function saveChecklist(agent: Agent, fields: Record<string, unknown>) {
  const page = await agent.get(PAGE);
  return agent
    .post(PAGE)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...fields });
}

describe('the admin keeps the checklist', () => {
  it('saves a checklist as version 1 with its reason and an audit event', async () => {
    const settings = await agents.admin!.get('/admin/settings');
    expect(settings.text).toContain('href="/admin/review-checklist"');
    const response = await saveChecklist(agents.admin!, {
      items: `  ${FIRST_ITEMS[0]}  \n\n${FIRST_ITEMS[1]}\n`,
      reason: 'Checklist agreed with QA',
    });
    expect(response.status).toBe(303);
    expect(response.headers.location).toBe(PAGE);
    const [row, ...older] = await versions();
    expect(older).toEqual([]);
    expect(row).toMatchObject({
      versionNumber: 1,
      items: FIRST_ITEMS,
      reason: 'Checklist agreed with QA',
      createdBy: world.users.admin!.id,
    });
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.action, 'review-checklist.changed'), eq(auditEvents.recordId, String(row!.id))),
      );
    expect(event).toMatchObject({
      actorUserId: world.users.admin!.id,
      recordType: 'review_checklist',
      beforeValue: { versionNumber: null, items: [] },
      afterValue: { versionNumber: 1, items: FIRST_ITEMS, reason: 'Checklist agreed with QA' },
    });
    const page = await agents.admin!.get(PAGE);
    expect(page.text).toContain('Saved as version 1 (2 items)');
    expect(page.text).toContain(`<li>${FIRST_ITEMS[0]}</li>`);
  });

  it('saving the same items again makes no new version', async () => {
    const response = await saveChecklist(agents.admin!, { items: FIRST_ITEMS.join('\n'), reason: 'Again' });
    expect(response.status).toBe(303);
    expect((await versions()).map((row) => row.versionNumber)).toEqual([1]);
    expect((await agents.admin!.get(PAGE)).text).toContain('Nothing had changed');
  });

  it('refuses non-admins: 403 on the page and on a save, nothing stored', async () => {
    expect((await agents.reviewer!.get(PAGE)).status).toBe(403);
    const token = csrfFrom((await agents.reviewer!.get('/')).text);
    const response = await agents
      .reviewer!.post(PAGE)
      .type('form')
      .send({ _csrf: token, items: 'Anything', reason: 'Not mine to change' });
    expect(response.status).toBe(403);
    expect((await versions()).map((row) => row.versionNumber)).toEqual([1]);
  });

  it.each([
    ['a repeated item', { items: 'Same point\nsame point', reason: 'r' }, 'items', 'Item 2 repeats item 1'],
    [
      'an item over 300 characters',
      { items: `Short\n${'x'.repeat(301)}`, reason: 'r' },
      'items',
      'Item 2 has 301 characters',
    ],
    [
      'more than 20 items',
      { items: Array.from({ length: 21 }, (_unused, index) => `Point ${index + 1}`).join('\n'), reason: 'r' },
      'items',
      'At most 20 items; there are 21',
    ],
    ['no reason', { items: 'A new point', reason: '   ' }, 'reason', 'Give the reason for this change'],
  ])(
    'refuses %s with a message beside the field and stores nothing',
    async (_case, fields, field, message) => {
      const response = await saveChecklist(agents.admin!, fields);
      expect(response.status).toBe(400);
      expect(response.text).toContain('Nothing was saved');
      expect(response.text).toContain(`id="${field}-error"`);
      expect(response.text).toContain(message);
      // What was typed is shown again.
      expect(response.text).toContain(fields.items.split('\n')[0]);
      expect((await versions()).map((row) => row.versionNumber)).toEqual([1]);
    },
  );
});

/** A new report rendered by the real worker and submitted to the reviewer; returns its ids. */
async function submittedReport() {
  const token = csrfFrom((await agents.author!.get('/')).text);
  const created = await agents
    .author!.post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', token)
    .send({});
  expect(created.status).toBe(201);
  const reportId = created.body.reportId as number;
  const version = await waitForRender(world.database.db, storage, reportId);
  const url = `/review/reports/${reportId}/versions/1`;
  const page = await agents.author!.get(url);
  const submitted = await agents
    .author!.post(`${url}/submit`)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), reviewerIds: String(world.users.reviewer!.id) });
  expect(submitted.status).toBe(303);
  return { url, versionId: version.id, sha: version.pdfSha256! };
}

const checklistVersionOn = (html: string) => /name="checklistVersionId" value="(\d+)"/.exec(html)?.[1];

describe('the reviewer confirms the checklist to sign', () => {
  let report: Awaited<ReturnType<typeof submittedReport>>;
  beforeAll(async () => {
    report = await submittedReport();
  }, 120_000);

  async function sign(fields: Record<string, unknown>) {
    const page = await agents.reviewer!.get(report.url);
    return agents
      .reviewer!.post(`${report.url}/sign`)
      .type('form')
      .send({
        _csrf: csrfFrom(page.text),
        ...signFormHiddenFields(page.text),
        meaning: 'Reviewed',
        identity: world.users.reviewer!.email,
        password: world.users.reviewer!.password,
        reviewedSha256: report.sha,
        ...fields,
      });
  }
  const signed = () =>
    world.database.db.select().from(signatures).where(eq(signatures.reportVersionId, report.versionId));

  it('the sign form shows each item as a required checkbox and posts the version', async () => {
    const page = await agents.reviewer!.get(report.url);
    const [current] = await versions();
    expect(page.text).toContain('Before signing, confirm');
    expect(checklistVersionOn(page.text)).toBe(String(current!.id));
    for (const item of FIRST_ITEMS)
      expect(page.text).toContain(`name="checklistConfirmed" value="${item}" required`);
  });

  it('refuses a signature that leaves an item unconfirmed: 400 with the field message, nothing signed', async () => {
    const [current] = await versions();
    const response = await sign({
      checklistVersionId: String(current!.id),
      checklistConfirmed: FIRST_ITEMS[0],
      comment: 'Kept when refused',
    });
    expect(response.status).toBe(400);
    expect(response.text).toContain(
      'Confirm every point of the checklist before signing: 1 of 2 is not ticked.',
    );
    // The typed comment and the tick given are shown again; the unticked item stays unticked.
    expect(response.text).toContain('value="Kept when refused"');
    expect(response.text).toContain(`value="${FIRST_ITEMS[0]}" required checked`);
    expect(response.text).toContain(`value="${FIRST_ITEMS[1]}" required class`);
    expect(await signed()).toEqual([]);
  });

  it('refuses a form that showed an older checklist version: 409, nothing signed', async () => {
    const [first] = await versions();
    const saved = await saveChecklist(agents.admin!, {
      items: SECOND_ITEMS.join('\n'),
      reason: 'Shelf-life point added',
    });
    expect(saved.status).toBe(303);
    const response = await sign({ checklistVersionId: String(first!.id), checklistConfirmed: FIRST_ITEMS });
    expect(response.status).toBe(409);
    expect(response.text).toContain('The checklist changed while you were signing; read it again.');
    // A form without the checklist at all is refused the same way.
    const without = await sign({});
    expect(without.status).toBe(409);
    expect(await signed()).toEqual([]);
  });

  it('signs with every item confirmed: the signature holds the items, the page and the signed PDF print them', async () => {
    const [current] = await versions();
    expect(current!.versionNumber).toBe(2);
    const page = await agents.reviewer!.get(report.url);
    expect(checklistVersionOn(page.text)).toBe(String(current!.id));
    const response = await sign({
      checklistVersionId: String(current!.id),
      checklistConfirmed: SECOND_ITEMS,
    });
    expect(response.status).toBe(303);
    const [signature, ...more] = await signed();
    expect(more).toEqual([]);
    expect(signature).toMatchObject({ checklistVersionId: current!.id, checklistConfirmed: SECOND_ITEMS });
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.action, 'report.signed'), eq(auditEvents.recordId, String(report.versionId))),
      );
    expect(event!.afterValue).toMatchObject({
      checklistVersionId: current!.id,
      checklistConfirmed: SECOND_ITEMS,
    });

    const reviewPage = await agents.reviewer!.get(report.url);
    expect(reviewPage.text).toContain(`Confirmed before signing: ${SECOND_ITEMS.join('; ')}`);

    const download = await agents
      .reviewer!.get(`${report.url}/signed.pdf`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });
    expect(download.status).toBe(200);
    const file = path.join(reportsDir, 'checklist-signed.pdf');
    writeFileSync(file, download.body as Buffer);
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ');
    expect(text).toContain('Confirmed before signing:');
    for (const item of SECOND_ITEMS) expect(text).toContain(item);
  });

  it('an empty checklist means none: the sign form shows no checklist', async () => {
    const saved = await saveChecklist(agents.admin!, { items: '', reason: 'Checklist withdrawn' });
    expect(saved.status).toBe(303);
    const [current] = await versions();
    expect(current).toMatchObject({ versionNumber: 3, items: [] });
    const other = await submittedReport();
    const page = await agents.reviewer!.get(other.url);
    expect(page.text).toContain('Sign this version');
    expect(page.text).not.toContain('Before signing, confirm');
    expect(checklistVersionOn(page.text)).toBeUndefined();
  }, 120_000);
});

describe('the database keeps checklist versions write-once', () => {
  it('refuses an UPDATE or DELETE of a checklist version', async () => {
    const [current] = await versions();
    await expect(
      world.database.db
        .update(reviewChecklists)
        .set({ reason: 'rewritten' })
        .where(eq(reviewChecklists.id, current!.id)),
    ).rejects.toMatchObject({ cause: { message: expect.stringMatching(/write-once/) } });
    await expect(
      world.database.db.delete(reviewChecklists).where(eq(reviewChecklists.id, current!.id)),
    ).rejects.toMatchObject({ cause: { message: expect.stringMatching(/write-once/) } });
  });
});
