import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reports, reportVersions } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { makeAnalysisRun } from '../integration/reports-fixture.ts';
import {
  launchChromium,
  SCREENSHOT_DIR,
  serve,
  TestContext,
  waitForPopup,
  waitForUrl,
} from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

/**
 * The analyst's report flow in Chromium: open an analysis, create a report, watch it render,
 * open the history, download the PDF (its bytes must be a PDF whose SHA-256 is the stored one)
 * and open the HTML preview. Rendering runs in this process through the real queue and pipeline.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-report-flow-'));
process.env.REPORTS_DIR = reportsDir;

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let worker: RenderWorker;
let runId: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
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
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

const shot = (name: string) => path.join(SCREENSHOT_DIR, name);

describe('report flow in Chromium', () => {
  it('creates a report from an analysis, watches it render, finds it in the history and downloads the PDF', async () => {
    const context = await TestContext.open(browser, {
      acceptDownloads: true,
      viewport: { width: 1280, height: 900 },
    });
    const page = await context.newPage();
    const ui = locate(page);
    const consoleErrors: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error') consoleErrors.push(message.text());
    });

    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.analyst!.email);
    await ui.getByLabel('Password').fill(world.users.analyst!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();

    await page.goto(`${server.url}/analyses/${runId}`);
    const form = ui.locator('#create-report');
    await form.scrollIntoViewIfNeeded();
    await form.getByLabel(/Title/).fill('Quillatrine 40 mg — 24-month shelf-life report');
    await form.getByLabel('Paper').selectOption('a4');
    await form.screenshot({ path: shot('report-create-form.png') });
    await form.getByRole('button', { name: 'Create report' }).click();

    // The report's page in the history island; the state updates by itself while it renders.
    await waitForUrl(page, /\/app\/reports\/\d+$/);
    const reportId = Number(new URL(page.url()).pathname.split('/').pop());
    await ui.getByRole('heading', { name: /RL-\d{4}-0001/ }).waitFor();
    const badge = ui.locator('tr[data-version="1"] [data-status]');
    const seen = new Set<string>([(await badge.getAttribute('data-status')) ?? '']);
    await page.screenshot({ path: shot('report-detail-rendering.png'), fullPage: true });
    await expect
      .poll(
        async () => {
          const status = (await badge.getAttribute('data-status')) ?? '';
          seen.add(status);
          return status;
        },
        { timeout: 60_000, interval: 100 },
      )
      .toBe('ready');
    // The page showed an unfinished state first, then "ready", without a reload.
    expect([...seen].some((status) => status === 'queued' || status === 'rendering')).toBe(true);
    await page.screenshot({ path: shot('report-detail-ready.png'), fullPage: true });

    const [row] = await world.database.db
      .select({ sha: reportVersions.pdfSha256, number: reports.reportNumber })
      .from(reportVersions)
      .innerJoin(reports, eq(reports.id, reportVersions.reportId))
      .where(eq(reportVersions.reportId, reportId));

    // The history lists it with its state.
    await ui.getByRole('link', { name: '← All reports' }).click();
    await ui.getByRole('heading', { name: 'Reports' }).waitFor();
    const listed = ui.getByRole('row', { name: new RegExp(row!.number) });
    await listed.getByText('Ready').waitFor();
    await page.screenshot({ path: shot('report-history.png'), fullPage: true });

    // Download from the history: a PDF, byte for byte the stored one.
    const download = await context.waitForDownload(() =>
      listed.getByRole('link', { name: 'Download' }).click(),
    );
    expect(download.suggestedFilename).toBe(`${row!.number}-v1.pdf`);
    const bytes = readFileSync(download.path);
    expect(bytes.subarray(0, 4).toString('latin1')).toBe('%PDF');
    // SHA-256 per FIPS 180-4 (node:crypto) of the downloaded bytes equals the recorded hash.
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(row!.sha);

    // The preview opens the stored HTML in a new tab, under a policy with no scripts at all.
    await listed.getByRole('link', { name: row!.number }).click();
    const preview = await waitForPopup(page, () => ui.getByRole('link', { name: 'Preview (HTML)' }).click());
    const response = await preview.goto(preview.url());
    expect(response?.headers()['content-security-policy']).toContain("script-src 'none'");
    await expect.poll(() => locate(preview).locator('body').textContent()).toContain(row!.number);
    await preview.screenshot({ path: shot('report-preview-html.png') });

    expect(consoleErrors).toEqual([]);
    await context.close();
  });
});
