import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import net, { type AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { isoDateTime } from '../../server/features/reports/render/template-format.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { signatures } from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
import { makeAnalysisRun } from '../integration/reports-fixture.ts';
import { launchChromium, SCREENSHOT_DIR, TestContext, waitForUrl } from '../support/browser.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { type Locator, locate } from './page-locator.ts';

/**
 * The review flow in Chromium, three people in three browser contexts:
 * - the analyst renders a report and submits it to the reviewer;
 * - an administrator opens the outbox (admin-only: it stands in for the reviewer's own mailbox)
 *   and reads the "review requested" mail, whose link is clickable because PUBLIC_URL is this
 *   test server. The reviewer deliberately holds the reviewer role only — giving them admin too
 *   would let a permission bug on the signing path (a reviewer who needs admin rights to sign)
 *   pass unnoticed, and segregation of duties is the point of the flow;
 * - the reviewer opens that link, signs with meaning, user ID and password, downloads the signed
 *   PDF — pdftotext shows the manifestation, pdfsig verifies the seal — and checks it on /verify.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-flow-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-review-flow-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

let world: TestWorld;
let browser: Browser;
let server: Server;
let baseUrl: string;
let worker: RenderWorker;
let smtp: TestSmtp;
let runId: number;

/** A free loopback port, so PUBLIC_URL (read once by the mail config) can name this server. */
async function freePort(): Promise<number> {
  const probe = net.createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise<void>((resolve) => probe.close(() => resolve()));
  return port;
}

beforeAll(async () => {
  const port = await freePort();
  baseUrl = `http://127.0.0.1:${port}`;
  process.env.PUBLIC_URL = baseUrl;
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'], admin: ['admin'] });
  smtp = await startTestSmtp(world.database.db);
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!));
  worker = await startRenderWorker({
    db: world.database.db,
    queue: openRenderQueue({
      config: parseRenderConfig(),
      connectionString: process.env.DATABASE_URL!,
      supervise: true,
    }),
    storage: reportStorage(reportsDir),
    renderer: createRenderPipeline(),
    log: () => undefined,
  });
  server = await new Promise((resolve) => {
    const listening = world.app.listen(port, '127.0.0.1', () => resolve(listening));
  });
  browser = await launchChromium();
});

afterAll(async () => {
  await browser?.close();
  await new Promise<void>((resolve) => (server ? server.close(() => resolve()) : resolve()));
  await closeSigningBrowsers();
  await worker?.close();
  await smtp?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

const shot = (name: string) => path.join(SCREENSHOT_DIR, name);

async function signedInContext(
  name: string,
): Promise<{ context: TestContext; page: Page; ui: Locator; errors: string[] }> {
  const context = await TestContext.open(browser, {
    acceptDownloads: true,
    viewport: { width: 1280, height: 900 },
  });
  const page = await context.newPage();
  const ui = locate(page);
  const errors: string[] = [];
  page.on('console', (message) => {
    if (message.type() === 'error') errors.push(message.text());
  });
  await page.goto(`${baseUrl}/signin`);
  await ui.getByLabel('E-mail address').fill(world.users[name]!.email);
  await ui.getByLabel('Password').fill(world.users[name]!.password);
  await ui.getByRole('button', { name: 'Sign in' }).click();
  await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();
  return { context, page, ui, errors };
}

describe('review and e-signature in Chromium', () => {
  it('the analyst submits, the reviewer finds the mail, opens the link and signs; the signed PDF shows the manifestation and pdfsig verifies it', async () => {
    // 1. The analyst creates a report, waits for it to render and submits it to the reviewer.
    const analyst = await signedInContext('analyst');
    await analyst.page.goto(`${baseUrl}/analyses/${runId}`);
    const form = analyst.ui.locator('#create-report');
    await form.getByLabel(/Title/).fill('Quillatrine 40 mg — shelf-life report for review');
    await form.getByRole('button', { name: 'Create report' }).click();
    await waitForUrl(analyst.page, /\/app\/reports\/\d+$/);
    await expect
      .poll(() => analyst.ui.locator('tr[data-version="1"] [data-status]').getAttribute('data-status'), {
        timeout: 60_000,
      })
      .toBe('ready');
    await analyst.ui.getByRole('link', { name: 'Review and signing →' }).click();
    await analyst.ui.getByRole('heading', { name: /Review: RL-\d{4}-\d{4} version 1/ }).waitFor();
    await analyst.ui.getByLabel(/Test reviewer/).check();
    await analyst.ui
      .getByLabel(/Note to the reviewers/)
      .fill('Batch B2 at 40 °C has one excluded point; the reason is in section 5.');
    await analyst.page.screenshot({ path: shot('review-submit.png'), fullPage: true });
    await analyst.ui.getByRole('button', { name: 'Submit for review' }).click();
    await analyst.ui.getByRole('status').filter({ hasText: 'Submitted for review' }).waitFor();
    await analyst.page.screenshot({ path: shot('review-submitted.png'), fullPage: true });

    // 2. An administrator reads the mail in the outbox and takes its link.
    await smtp.waitForMailTo(world.users.reviewer!.email, 10_000);
    const admin = await signedInContext('admin');
    await admin.page.goto(`${baseUrl}/admin/outbox`);
    await admin.ui.getByRole('link', { name: /review requested/ }).click();
    await admin.ui.getByRole('heading', { name: /review requested/ }).waitFor();
    await admin.page.screenshot({ path: shot('review-outbox-mail.png'), fullPage: true });
    const link = admin.ui.locator('pre a[href*="/review/reports/"]');
    const href = await link.getAttribute('href');
    expect(href).toMatch(new RegExp(`^${baseUrl}/review/reports/\\d+/versions/1$`));

    // 3. The reviewer, signed in separately, opens the link and signs.
    const reviewer = await signedInContext('reviewer');
    await reviewer.page.goto(`${baseUrl}/review`);
    await reviewer.ui.getByRole('heading', { name: 'Waiting for my review' }).waitFor();
    await reviewer.page.screenshot({ path: shot('review-queue.png'), fullPage: true });
    const inlinePdf = reviewer.page.waitForResponse((response) =>
      response.url().endsWith('/under-review.pdf'),
    );
    await reviewer.page.goto(href!);
    // The PDF under review is loaded inline in the page's viewer, not blocked by a frame policy
    // (issue 13 §4): the frame's response arrives whole, as a PDF, under a same-site frame policy.
    const framed = await inlinePdf;
    expect(framed.status()).toBe(200);
    expect(framed.headers()['content-type']).toBe('application/pdf');
    expect(framed.headers()['content-security-policy']).toBe("frame-ancestors 'self'");
    expect(reviewer.page.frames().some((frame) => frame.url().endsWith('/under-review.pdf'))).toBe(true);
    const reviewedSha = await reviewer.ui.locator('[data-reviewed-sha256]').textContent();
    expect(reviewedSha).toMatch(/^[0-9a-f]{64}$/);
    await reviewer.ui.getByLabel('Meaning of your signature').selectOption('Approved');
    await reviewer.ui.getByLabel(/Comment/).fill('Data, fits and shelf-life statement checked.');
    await reviewer.ui.getByLabel('User ID (your e-mail address)').fill(world.users.reviewer!.email);
    await reviewer.ui.getByLabel('Password', { exact: true }).fill(world.users.reviewer!.password);
    await reviewer.ui.locator('#sign-heading').scrollIntoViewIfNeeded();
    await reviewer.page.screenshot({ path: shot('review-sign-form.png'), fullPage: true });
    await reviewer.ui.getByRole('button', { name: 'Sign', exact: true }).click();
    await reviewer.ui
      .getByRole('status')
      .filter({ hasText: 'Signed (Approved)' })
      .waitFor({ timeout: 60_000 });
    await reviewer.page.screenshot({ path: shot('review-signed.png'), fullPage: true });

    // 4. The signed PDF: its bytes are the recorded ones, the manifestation is in the text, the seal verifies.
    const download = await reviewer.context.waitForDownload(() =>
      reviewer.ui.getByRole('link', { name: 'Download the signed PDF' }).click(),
    );
    expect(download.suggestedFilename).toMatch(/^RL-\d{4}-\d{4}-v1-signed\.pdf$/);
    const file = download.path;
    const bytes = readFileSync(file);
    const [signature] = await world.database.db
      .select()
      .from(signatures)
      .where(eq(signatures.signerId, world.users.reviewer!.id));
    // SHA-256 (FIPS 180-4) of the downloaded file is the one the signature record is linked to.
    expect(sha256Hex(bytes)).toBe(signature!.signedPdfSha256);
    expect(signature!.reviewedPdfSha256).toBe(reviewedSha);
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' });
    expect(text).toContain('Test reviewer');
    expect(text).toContain('Approved');
    expect(text).toContain(`${isoDateTime(signature!.signedAt, 'UTC')} (UTC)`);
    const pdfsig = execFileSync('pdfsig', [file], { encoding: 'utf8', env: { ...process.env, LC_ALL: 'C' } });
    expect(pdfsig).toContain('Signature Validation: Signature is Valid.');
    expect(pdfsig).toContain('Total document signed');
    // The signatures page (the last one) as an image, to look at.
    const pages = Number(/Pages:\s+(\d+)/.exec(execFileSync('pdfinfo', [file], { encoding: 'utf8' }))?.[1]);
    execFileSync('pdftoppm', [
      '-f',
      String(pages),
      '-l',
      String(pages),
      '-png',
      '-r',
      '80',
      '-singlefile',
      file,
      shot('review-signed-pdf-signatures-page').replace(/\.png$/, ''),
    ]);

    // 5. The reviewer checks the downloaded copy on the verification page.
    await reviewer.page.goto(`${baseUrl}/verify`);
    await reviewer.ui.locator('#verify-file').setInputFiles(file);
    await reviewer.ui.getByRole('button', { name: 'Check the file' }).click();
    const verdict = reviewer.ui.locator('[data-verdict]');
    await verdict.waitFor({ timeout: 30_000 });
    expect(await verdict.getAttribute('data-verdict')).toBe('verified');
    await reviewer.page.screenshot({ path: shot('review-verify.png'), fullPage: true });

    // The author sees the signed state, and got the "signed" mail.
    const signedMail = await smtp.waitForMailTo(world.users.analyst!.email, 10_000);
    expect(signedMail.subject).toMatch(/signed \(Approved\)/);
    await analyst.page.reload();
    await analyst.ui.locator('[data-review-state="signed"]').waitFor();

    for (const person of [analyst, admin, reviewer]) {
      expect(person.errors).toEqual([]);
      await person.context.close();
    }
  });
});
