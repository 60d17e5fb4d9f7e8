import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { postReviewForm, startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Issue 17 §2, errors tied to fields on the sign form: a refused submission marks each refused
 * field with aria-invalid="true" and aria-describedby naming its message, and opens with an error
 * summary that takes focus (autofocus, tabindex -1) and links each message to its field — as the
 * study and invite forms mark theirs. Negatives: the page as first shown marks nothing and has
 * no summary; a field that was not refused is not marked.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-sign-form-errors-'));
process.env.REPORTS_DIR = reportsDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let worker: RenderWorker;
let reportId: number;
let pdfSha256: string;
let signer: Agent;
const storage = reportStorage(reportsDir);

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], signer: ['reviewer'] });
  worker = await startTestRenderWorker(world.database.db, storage);
  const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.author!);
  const author = (await signIn(world.app, world.users.author!.email, world.users.author!.password)).agent;
  signer = (await signIn(world.app, world.users.signer!.email, world.users.signer!.password)).agent;
  const created = await author
    .post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', csrfFrom((await author.get('/')).text))
    .send({});
  expect(created.status).toBe(201);
  reportId = created.body.reportId;
  pdfSha256 = (await waitForRender(world.database.db, storage, reportId)).pdfSha256!;
  const submitted = await postReviewForm(author, `${url()}/submit`, {
    reviewerIds: String(world.users.signer!.id),
  });
  expect(submitted.status).toBe(303);
}, 120_000);

afterAll(async () => {
  await closeSigningBrowsers();
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

const url = () => `/review/reports/${reportId}/versions/1`;

/** The opening tag of the element with `id` in `html`. */
function tagWithId(html: string, id: string): string {
  const match = new RegExp(`<[a-z]+ [^>]*id="${id}"[^>]*>`).exec(html);
  if (!match) throw new Error(`no element with id ${id}`);
  return match[0];
}

/** The error summary's links: [href, text] in order. */
function summaryLinks(html: string): [string, string][] {
  const summary = /<div id="sign-error-summary"[\s\S]*?<\/div>/.exec(html)?.[0] ?? '';
  return [...summary.matchAll(/<a class="underline" href="([^"]+)">([^<]+)<\/a>/g)].map((m) => [
    m[1]!,
    m[2]!,
  ]);
}

describe('the sign form ties its errors to its fields', () => {
  it('as first shown: no field marked invalid, no error summary', async () => {
    const page = await signer.get(url()).expect(200);
    expect(page.text).toContain('id="sign-meaning"');
    expect(page.text).not.toContain('aria-invalid="true"');
    expect(page.text).not.toContain('sign-error-summary');
  });

  it('sent empty: meaning and password marked, described by their messages; the summary takes focus and links to them', async () => {
    const refused = await postReviewForm(signer, `${url()}/sign`, { reviewedSha256: pdfSha256 });
    expect(refused.status).toBe(400);
    const html = refused.text;
    for (const field of ['sign-meaning', 'sign-password']) {
      const tag = tagWithId(html, field);
      expect(tag).toContain('aria-invalid="true"');
      expect(tag).toContain(`aria-describedby="${field}-error"`);
    }
    expect(tagWithId(html, 'sign-meaning-error')).toMatch(/^<p /);
    expect(html).toMatch(/<p id="sign-meaning-error"[^>]*>Choose the meaning of your signature\.<\/p>/);
    expect(html).toMatch(/<p id="sign-password-error"[^>]*>Enter your password\.<\/p>/);
    // The comment was not refused: not marked.
    expect(tagWithId(html, 'sign-comment')).not.toContain('aria-invalid');
    const summary = tagWithId(html, 'sign-error-summary');
    expect(summary).toContain('role="alert"');
    expect(summary).toContain('tabindex="-1"');
    expect(summary).toContain('autofocus');
    expect(html).toMatch(/id="sign-error-summary-heading"[^>]*>Not signed: 2 problems to fix\.</);
    expect(summaryLinks(html)).toEqual([
      ['#sign-meaning', 'Choose the meaning of your signature.'],
      ['#sign-password', 'Enter your password.'],
    ]);
    // Only one element on the page asks for focus.
    expect(html.match(/\sautofocus[\s>]/g)).toHaveLength(1);
  });

  it('the user ID missing on the first signing: only that field is marked, and the summary links to it', async () => {
    const refused = await postReviewForm(signer, `${url()}/sign`, {
      reviewedSha256: pdfSha256,
      meaning: 'Reviewed',
      password: world.users.signer!.password,
    });
    expect(refused.status).toBe(400);
    const html = refused.text;
    const identity = tagWithId(html, 'sign-identity');
    expect(identity).toContain('aria-invalid="true"');
    expect(identity).toContain('aria-describedby="sign-identity-error"');
    expect(tagWithId(html, 'sign-meaning')).not.toContain('aria-invalid');
    expect(tagWithId(html, 'sign-password')).not.toContain('aria-invalid');
    expect(summaryLinks(html)).toEqual([
      [
        '#sign-identity',
        'Enter your user ID (your e-mail address): the first signing of a session needs both.',
      ],
    ]);
  });
});
