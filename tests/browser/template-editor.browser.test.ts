import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import { reportTemplates, reportVersions } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { makeAnalysisRun } from '../integration/reports-fixture.ts';
import {
  launchChromium,
  pressShortcut,
  SCREENSHOT_DIR,
  serve,
  TestContext,
  waitForUrl,
} from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { type Locator, locate } from './page-locator.ts';

/**
 * The admin's template editor in Chromium: edit the default template's letterhead (new text and
 * a field inserted from the side panel), watch the preview follow, see a syntax error located,
 * save, compare, publish. Then the analyst's report made afterwards is rendered with the new
 * version, while the report made before keeps the old one. Rendering runs in this process
 * through the real queue and pipeline.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-template-editor-'));
process.env.REPORTS_DIR = reportsDir;

const NEW_LETTERHEAD = 'Northfield QC Laboratory · Stability Unit';
const STUDY_TITLE = 'Quillatrine 40 mg — registration stability (demo)';

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let worker: RenderWorker;
let runId: number;

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], analyst: ['analyst'] });
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

async function signedIn(
  name: 'admin' | 'analyst',
): Promise<{ context: TestContext; page: Page; ui: Locator; errors: string[] }> {
  const context = await TestContext.open(browser, { viewport: { width: 1680, height: 1050 } });
  const page = await context.newPage();
  const ui = locate(page);
  const errors: string[] = [];
  page.on('console', (message) => {
    if (message.type() === 'error') errors.push(message.text());
  });
  page.on('pageerror', (error) => errors.push((error as Error).message));
  await page.goto(`${server.url}/signin`);
  await ui.getByLabel('E-mail address').fill(world.users[name]!.email);
  await ui.getByLabel('Password').fill(world.users[name]!.password);
  await ui.getByRole('button', { name: 'Sign in' }).click();
  await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();
  return { context, page, ui, errors };
}

/** The analyst creates a report from the analysis page; resolves when it has rendered. */
async function createReportAsAnalyst(page: Page, title: string) {
  const ui = locate(page);
  await page.goto(`${server.url}/analyses/${runId}`);
  const form = ui.locator('#create-report');
  await form.getByLabel(/Title/).fill(title);
  await form.getByRole('button', { name: 'Create report' }).click();
  await waitForUrl(page, /\/app\/reports\/\d+$/);
  const reportId = Number(new URL(page.url()).pathname.split('/').pop());
  await expect
    .poll(() => ui.locator('tr[data-version="1"] [data-status]').getAttribute('data-status'), {
      timeout: 90_000,
      interval: 200,
    })
    .toBe('ready');
  const [version] = await world.database.db
    .select()
    .from(reportVersions)
    .where(eq(reportVersions.reportId, reportId));
  return { reportId, version: version! };
}

describe('template editor in Chromium', () => {
  it('the admin edits, previews, saves and publishes; later reports use it, earlier ones keep theirs', async () => {
    const analyst = await signedIn('analyst');
    const earlier = await createReportAsAnalyst(analyst.page, 'Report before the template change');
    expect(earlier.version.html).not.toContain(NEW_LETTERHEAD);

    const admin = await signedIn('admin');
    const { page, ui } = admin;
    await ui
      .getByRole('navigation', { name: 'Main' })
      .getByRole('link', { name: 'Templates', exact: true })
      .click();
    await ui.getByRole('heading', { name: 'Report templates' }).waitFor();
    await page.screenshot({ path: shot('template-list.png'), fullPage: true });
    await ui.getByRole('link', { name: 'Edit template' }).click();

    // The editor opens on the published version with a preview of the chosen analysis.
    const frame = ui.frameLocator('iframe[title="Report preview"]');
    await frame.locator('.letterhead').first().waitFor({ timeout: 30_000 });
    await expect.poll(() => ui.getByLabel('Preview with').inputValue()).toBe(String(runId));

    // Letterhead: new text, and a field inserted from the side panel at the cursor.
    await ui.getByRole('tab', { name: 'letterhead' }).click();
    const source = ui.locator('.cm-content[data-part="partial \\"letterhead\\""]');
    await source.click();
    await pressShortcut(page, 'Control+a');
    await page.keyboard.sendCharacter(
      `<header class="letterhead">\n  <span class="letterhead-mark" aria-hidden="true"></span>\n  <span class="letterhead-name">${NEW_LETTERHEAD}</span>\n  <span class="letterhead-product">Study: `,
    );
    await ui.getByPlaceholder('Find…').fill('study.title');
    await ui.getByRole('button', { name: 'Insert study.title' }).click();
    await page.keyboard.sendCharacter('</span>\n</header>\n');
    await expect.poll(() => source.textContent()).toContain('Study: {{study.title}}</span>');

    // The preview follows the draft (debounced), filled in with the analysis' own study.
    await frame.getByText(NEW_LETTERHEAD).first().waitFor({ timeout: 15_000 });
    await expect
      .poll(() => frame.locator('.letterhead-product').first().textContent())
      .toBe(`Study: ${STUDY_TITLE}`);
    await ui.getByText('Preview up to date').waitFor();
    await page.screenshot({ path: shot('template-editor-preview.png') });

    // A syntax error is listed with its line and marked in the gutter; undo removes it.
    await page.keyboard.sendCharacter('\n{{#if study.notes}}');
    const problems = ui.getByRole('alert', { name: 'Problems in the draft' });
    await expect
      .poll(() => problems.textContent(), { timeout: 15_000 })
      .toMatch(/Partial: letterhead, line \d+, column \d+/);
    await expect.poll(() => ui.locator('.cm-problem-marker').count()).toBeGreaterThan(0);
    await page.screenshot({ path: shot('template-editor-syntax-error.png') });
    await pressShortcut(page, 'Control+z');
    await problems.waitFor({ state: 'detached', timeout: 15_000 });

    // Save as version 2, then publish it.
    await ui.getByLabel('What changed').fill('Letterhead names the stability unit and the study');
    await ui.getByRole('button', { name: 'Save as version 2' }).click();
    await ui.getByRole('status').filter({ hasText: 'Saved as version 2' }).waitFor();
    await ui
      .getByRole('region', { name: 'Template source' })
      .getByRole('button', { name: 'Publish version 2' })
      .click();
    // Change control: the reason (audited) and an explicit confirmation.
    const confirm = ui.getByRole('form', { name: 'Publish version 2' });
    await confirm.getByLabel(/^Reason for the change/).fill('Letterhead names the stability unit');
    await confirm.getByRole('checkbox', { name: 'I confirm that new reports are to use version 2.' }).check();
    await confirm.getByRole('button', { name: 'Confirm the publication' }).click();
    await ui.getByRole('status').filter({ hasText: 'Version 2 is published' }).waitFor();
    const versions = ui.getByRole('region', { name: 'Versions' });
    await versions.locator('tr[data-version="2"]').getByText('Published').waitFor();

    // Compare version 1 with version 2: only the letterhead changed.
    await versions.getByLabel('Compare version').selectOption({ label: '1' });
    await versions.getByLabel('with version').selectOption({ label: '2' });
    await versions.getByRole('button', { name: 'Compare' }).click();
    const changes = ui.getByRole('region', { name: 'Changes in Partial: letterhead' });
    await changes.locator('tr[data-kind="added"]').getByText(NEW_LETTERHEAD, { exact: false }).waitFor();
    await expect
      .poll(() => changes.locator('tr[data-kind="removed"]').allTextContents())
      .toEqual(expect.arrayContaining([expect.stringContaining('{{organisation.name}}')]));
    await versions.screenshot({ path: shot('template-versions-diff.png') });

    const [template] = await world.database.db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.organisationId, world.organisationId));

    // A report made now by the analyst uses version 2; the earlier one keeps version 1.
    const later = await createReportAsAnalyst(analyst.page, 'Report after the template change');
    expect(later.version.templateVersionId).toBe(template!.publishedVersionId);
    expect(later.version.templateVersionId).not.toBe(earlier.version.templateVersionId);
    expect(later.version.html).toContain(NEW_LETTERHEAD);
    expect(later.version.html).toContain(`Study: ${STUDY_TITLE}`);
    const [earlierNow] = await world.database.db
      .select()
      .from(reportVersions)
      .where(eq(reportVersions.reportId, earlier.reportId));
    expect(earlierNow!.templateVersionId).toBe(earlier.version.templateVersionId);
    expect(earlierNow!.html).not.toContain(NEW_LETTERHEAD);

    const preview = await analyst.context.newPage();
    await preview.goto(`${server.url}/api/reports/${later.reportId}/versions/1/html`);
    await locate(preview).getByText(NEW_LETTERHEAD).first().waitFor();
    await preview.screenshot({ path: shot('template-report-after-publish.png') });

    expect(admin.errors).toEqual([]);
    expect(analyst.errors).toEqual([]);
    await admin.context.close();
    await analyst.context.close();
  });
});
