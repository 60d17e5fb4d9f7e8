import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { postReviewForm, startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Issue 17 §1 on the review page: submitting (or returning, or signing) redirects back to the same
 * page, whose title is the one it had, so the notice saying what happened takes focus
 * (autofocus, tabindex -1, role="status") — the page's only autofocus. Negatives: the notice is
 * shown once, and a page without a notice asks for focus nowhere; a refused form's error
 * summary is then the one element that does.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-notice-'));
process.env.REPORTS_DIR = reportsDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let worker: RenderWorker;
let author: Agent;
let signer: Agent;
let url: string;

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], signer: ['reviewer'] });
  const storage = reportStorage(reportsDir);
  worker = await startTestRenderWorker(world.database.db, storage);
  const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!);
  author = (await signIn(world.app, world.users.author!.email, world.users.author!.password)).agent;
  signer = (await signIn(world.app, world.users.signer!.email, world.users.signer!.password)).agent;
  const created = await author
    .post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', csrfFrom((await author.get('/')).text))
    .send({});
  expect(created.status).toBe(201);
  await waitForRender(world.database.db, storage, created.body.reportId);
  url = `/review/reports/${created.body.reportId}/versions/1`;
}, 120_000);

afterAll(async () => {
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

const autofocused = (html: string) => html.match(/<[a-z]+ [^>]*\sautofocus[\s>][^>]*>?/g) ?? [];

describe('the review page after a form was accepted', () => {
  it('before any action: nothing on the page asks for focus', async () => {
    const page = await author.get(url).expect(200);
    expect(page.text).not.toContain('id="review-notice"');
    expect(autofocused(page.text)).toEqual([]);
  });

  it('after "Submit for review": the notice takes focus and says what happened, once', async () => {
    const submitted = await postReviewForm(author, `${url}/submit`, {
      reviewerIds: String(world.users.signer!.id),
    });
    expect(submitted.status).toBe(303);
    expect(submitted.headers.location).toBe(url);
    const page = await author.get(url).expect(200);
    const notice = /<p id="review-notice"[^>]*>([^<]*)<\/p>/.exec(page.text);
    expect(notice?.[1]).toBe('Submitted for review (round 1) to Test signer.');
    for (const attribute of ['role="status"', 'tabindex="-1"', 'autofocus'])
      expect(notice?.[0]).toContain(attribute);
    expect(autofocused(page.text)).toHaveLength(1);

    const again = await author.get(url).expect(200);
    expect(again.text).not.toContain('id="review-notice"');
    expect(autofocused(again.text)).toEqual([]);
  });

  it('a refused sign: the error summary is the one element asking for focus, and no notice is shown', async () => {
    const refused = await postReviewForm(signer, `${url}/sign`, {});
    expect(refused.status).toBe(400);
    expect(refused.text).not.toContain('id="review-notice"');
    const focusable = autofocused(refused.text);
    expect(focusable).toHaveLength(1);
    expect(focusable[0]).toContain('id="sign-error-summary"');
  });
});
