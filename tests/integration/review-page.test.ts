import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAnalysis } from '../../server/features/analysis/analysis-runs.ts';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { datasets, signatures, uploads } from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
import {
  createTestWorld,
  csrfFrom,
  signFormHiddenFields,
  signIn,
  type TestWorld,
} from '../support/test-app.ts';
import { postReviewForm, startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';
import { editStudy } from './study-flow-fixture.ts';

/**
 * Issue 13 §4, the reviewer sees what they sign: the PDF under review inline beside the signing
 * form, the author's submission note, links to the analysis, the dataset and the original file
 * with their hashes, the data check, what changed since the previous version (side by side), and
 * the record's audit-trail entries since the last review round (FDA, Data Integrity and
 * Compliance With Drug CGMP, Q&A, 2018: audit trails are reviewed with the record). Negatives: a
 * reviewer of another organisation sees none of it; a record changed while the reviewer was
 * reading is not signed (409) until the page is read again; a form without its stamp is refused.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-page-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-page-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

type Agent = ReturnType<typeof request.agent>;
let world: TestWorld;
let other: TestWorld;
let worker: RenderWorker;
let runId: number;
let studyId: number;
let datasetId: number;
let reportId: number;
const agents: Record<string, Agent> = {};
let outsider: Agent;
const storage = reportStorage(reportsDir);
const NOTE = 'Please check the 40 °C series: point 6 was re-injected (invented scenario).';

beforeAll(async () => {
  world = await createTestWorld({ author: ['analyst'], signer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer', 'admin'] });
  worker = await startTestRenderWorker(world.database.db, storage);
  ({ runId, studyId, datasetId } = await makeAnalysisRun(
    world.database.db,
    world.organisationId,
    world.users.author!,
  ));
  for (const name of Object.keys(world.users))
    agents[name] = (await signIn(world.app, world.users[name]!.email, world.users[name]!.password)).agent;
  outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password)).agent;
  const created = await agents
    .author!.post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', csrfFrom((await agents.author!.get('/')).text))
    .send({});
  expect(created.status).toBe(201);
  reportId = created.body.reportId;
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

const waitReady = (versionNumber: number) =>
  waitForRender(world.database.db, storage, reportId, versionNumber);

const signFields = (pdfSha256: string) => ({
  meaning: 'Reviewed',
  identity: world.users.signer!.email,
  password: world.users.signer!.password,
  reviewedSha256: pdfSha256,
});

const signaturesOf = (versionId: number) =>
  world.database.db.select().from(signatures).where(eq(signatures.reportVersionId, versionId));

describe('the review page shows what is signed', () => {
  it('shows the PDF inline (framed by this site only), with the note, the record, its hashes and the data check', async () => {
    const v1 = await waitReady(1);
    // One reviewer in the organisation: the submit form still ticks nobody and says who can sign.
    const draft = await agents.author!.get(reviewUrl(1)).expect(200);
    const boxes = draft.text.match(/<input type="checkbox" name="reviewerIds"[^>]*>/g) ?? [];
    expect(boxes).toEqual([`<input type="checkbox" name="reviewerIds" value="${world.users.signer!.id}">`]);
    expect(draft.text).toMatch(
      /data-who-can-sign>Who can sign: only the people you tick here, for this round\. One member other than you holds the reviewer role; nobody is ticked for you, even when there is only one\./,
    );
    const submitted = await postReviewForm(agents.author!, `${reviewUrl(1)}/submit`, {
      reviewerIds: String(world.users.signer!.id),
      note: NOTE,
    });
    expect(submitted.status).toBe(303);
    const page = await agents.signer!.get(reviewUrl(1)).expect(200);
    // The viewer beside the sign form, pointing at the inline PDF of this version.
    const frame = /<iframe src="([^"]+)"[^>]*data-pdf-viewer/.exec(page.text);
    expect(frame?.[1]).toBe(`${reviewUrl(1)}/under-review.pdf`);
    expect(page.text.indexOf('data-pdf-viewer')).toBeLessThan(page.text.indexOf('id="sign-heading"'));
    // The review page itself may not be framed; the PDF may be framed by this site only.
    expect(page.headers['content-security-policy']).toContain("frame-ancestors 'none'");
    const pdf = await agents.signer!.get(frame![1]!).buffer(true).expect(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    expect(pdf.headers['content-disposition']).toMatch(
      /^inline; filename="RL-\d{4}-\d{4}-v1-unsigned\.pdf"$/,
    );
    expect(pdf.headers['content-security-policy']).toBe("frame-ancestors 'self'");
    expect(pdf.headers['x-frame-options']).toBe('SAMEORIGIN');
    expect(sha256Hex(pdf.body as Buffer)).toBe(v1.pdfSha256);

    // The submission note, and links to what the version rests on with the stored hashes.
    expect(page.text).toContain('data-submission-note');
    expect(page.text).toContain(
      'Please check the 40 °C series: point 6 was re-injected (invented scenario).',
    );
    const [dataset] = await world.database.db.select().from(datasets).where(eq(datasets.id, datasetId));
    const [upload] = await world.database.db.select().from(uploads).where(eq(uploads.id, dataset!.uploadId));
    expect(page.text).toContain(`href="/analyses/${runId}"`);
    expect(page.text).toContain(`href="/studies/${studyId}#datasets-heading"`);
    expect(page.text).toContain(`href="/uploads/${upload!.id}/original"`);
    expect(page.text).toMatch(new RegExp(`data-dataset-sha256>${dataset!.sha256}<`));
    expect(page.text).toMatch(new RegExp(`data-upload-sha256>${upload!.sha256}<`));
    // The data check re-hashes the stored file and series now: all three lines pass.
    expect(page.text).toContain('data-data-check="passed"');
    expect(page.text.match(/<span class="sr-only">Passed: <\/span>/g)).toHaveLength(3);
    // The linked original is the uploaded file byte for byte.
    const original = await agents
      .signer!.get(`/uploads/${upload!.id}/original`)
      .responseType('blob')
      .expect(200);
    expect(sha256Hex(original.body as Buffer)).toBe(upload!.sha256);
    // First version, first round: nothing to compare with, said so.
    expect(page.text).toContain('there is nothing earlier to compare with');
  });

  it("lists the record's audit-trail entries since the last round, in plain words, before signing", async () => {
    const page = await agents.signer!.get(reviewUrl(1)).expect(200);
    expect(page.text).toContain(
      'The whole history of this record: it has no earlier signature or review round.',
    );
    const trail = /<ol[^>]*data-record-trail>([\s\S]*?)<\/ol>/.exec(page.text)?.[1] ?? '';
    // The study's creation, the import, the analysis, the report, its render and the submission.
    for (const action of ['dataset.imported', 'report.created', 'review.submitted'])
      expect(trail).toContain(`>${action}</span>`);
    expect(trail).not.toMatch(/: review\.submitted/); // the words are not the code
    // The sign form points the reviewer at them, with their number.
    const count = (trail.match(/<li /g) ?? []).length;
    expect(count).toBeGreaterThan(2);
    expect(page.text).toContain(`the ${count} audit-trail entries of this record</a>`);
  });

  it('a study changed while the reviewer reads is not signed (409, nothing written); read again, it signs', async () => {
    const v1 = await waitReady(1);
    const shown = await agents.signer!.get(reviewUrl(1)).expect(200);
    const stamp = signFormHiddenFields(shown.text).recordStamp;
    expect(stamp).toMatch(/^1:in_review:\d+$/);
    const edited = await editStudy(agents.author!, studyId, {
      notes: 'Storage note added after submission (invented scenario).',
      reasonForChange: 'Clarified the storage note (invented change control CC-0107).',
    });
    expect(edited.status).toBe(303);
    const refused = await agents
      .signer!.post(`${reviewUrl(1)}/sign`)
      .type('form')
      .send({ _csrf: csrfFrom(shown.text), recordStamp: stamp, ...signFields(v1.pdfSha256!) });
    expect(refused.status).toBe(409);
    expect(refused.text).toContain('This record changed while you were reading it');
    expect(await signaturesOf(v1.id)).toEqual([]);
    // The page shown again lists the study change in the trail and carries the new stamp.
    expect(refused.text).toMatch(/data-record-trail>[\s\S]*>study\.updated<\/span>/);
    expect(signFormHiddenFields(refused.text).recordStamp).not.toBe(stamp);
    // A form without the stamp is refused as incomplete, not signed.
    const incomplete = await agents
      .signer!.post(`${reviewUrl(1)}/sign`)
      .type('form')
      .send({ _csrf: csrfFrom(shown.text), ...signFields(v1.pdfSha256!) });
    expect(incomplete.status).toBe(400);
    expect(incomplete.text).toContain('The form is incomplete; reload the page.');
    expect(await signaturesOf(v1.id)).toEqual([]);
    // Read again: signs.
    const signed = await postReviewForm(agents.signer!, `${reviewUrl(1)}/sign`, signFields(v1.pdfSha256!));
    expect(signed.status).toBe(303);
    expect(await signaturesOf(v1.id)).toHaveLength(1);
  }, 60_000);

  it('version 2 from another run shows what changed since version 1, side by side, and the trail starts at the v1 signature', async () => {
    const { runId: rerun } = await runAnalysis(world.database.db, {
      organisationId: world.organisationId,
      datasetId,
      actor: { userId: world.users.author!.id, label: world.users.author!.email },
      options: { confidenceLevel: 0.9, errorModel: 'auto' },
    });
    const created = await agents
      .author!.post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', csrfFrom((await agents.author!.get('/')).text))
      .send({ analysisRunId: rerun });
    expect(created.status).toBe(201);
    await waitReady(2);
    expect(
      (
        await postReviewForm(agents.author!, `${reviewUrl(2)}/submit`, {
          reviewerIds: String(world.users.signer!.id),
        })
      ).status,
    ).toBe(303);
    const page = await agents.signer!.get(reviewUrl(2)).expect(200);
    expect(page.text).toContain('What changed since version 1');
    const table = /<table[^>]*data-changes-table>([\s\S]*?)<\/table>/.exec(page.text)?.[1] ?? '';
    const row = (label: string) =>
      new RegExp(
        `<tr[^>]*>\\s*<th scope="row"[^>]*>${label}[^<]*(<span[^>]*>\\(changed\\)</span>)?</th><td[^>]*>([^<]*)</td><td[^>]*>([^<]*)</td>`,
      ).exec(table);
    expect(row('Confidence level')?.slice(1)).toEqual([
      '<span class="font-semibold text-alert">(changed)</span>',
      '0.95',
      '0.9',
    ]);
    expect(row('Analysis run')?.slice(2)).toEqual([`run #${runId}`, `run #${rerun}`]);
    // Unchanged inputs are shown unmarked.
    expect(row('Paper')?.[1]).toBeUndefined();
    expect(page.text).toMatch(
      /<strong data-changed-count>\d+<\/strong> of the figures and inputs below differ/,
    );
    // The trail starts after version 1 was signed.
    expect(page.text).toContain('Since version 1 of this report was signed');
    const trail = /<ol[^>]*data-record-trail>([\s\S]*?)<\/ol>/.exec(page.text)?.[1] ?? '';
    expect(trail).toContain('>review.submitted</span>');
    expect(trail).not.toContain('>dataset.imported</span>');
  }, 90_000);

  it('a reviewer of another organisation sees neither the page nor the PDF (404)', async () => {
    await outsider.get(reviewUrl(1)).expect(404);
    await outsider.get(`${reviewUrl(1)}/under-review.pdf`).expect(404);
  });
});
