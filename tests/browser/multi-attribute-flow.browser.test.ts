import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  DEMO_ATTRIBUTES,
  DEMO_RESULT_COLUMNS,
  DEMO_RESULTS_WORKBOOK_NAME,
  demoResultRows,
  demoResultsWorkbook,
  RESULTS_DEMO_RECIPE,
} from '../../server/demo/demo-stability-results.ts';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { analysisRuns, signatures } from '../../server/platform/db/schema/index.ts';
import { reportStorage, sha256Hex } from '../../server/platform/storage/report-storage.ts';
import type { StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import type { StudyAttribute } from '../../shared/kinetics/stability/study-attributes.ts';
import { startTestRenderWorker } from '../integration/render-fixture.ts';
import { launchChromium, SCREENSHOT_DIR, serve, TestContext, waitForUrl } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { type Locator, locate } from './page-locator.ts';

/**
 * Issue 15 "Done when": a multi-attribute workbook goes from upload to a signed report in the
 * browser, as a new analyst and reviewer would take it. The analyst creates the demo study of
 * four attributes (assay, two degradation products, water) through the study form with "Add
 * another attribute", uploads the demo results workbook (one column per attribute, products below
 * the reporting threshold written "<0.05"), matches each value column to its attribute on the
 * mapping screen, imports, runs the analysis, reads the study's verdict and makes a report; the
 * reviewer signs it and the signed PDF's seal verifies with pdfsig.
 *
 * What the pages and the PDF must say is read from the stored run (its `studyShelfLife`), never
 * written here as a number: the test checks that the screen and the report say what was recorded.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-multi-attribute-flow-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-multi-attribute-flow-signing-'));
const workbookDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-multi-attribute-workbook-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;
const workbookPath = path.join(workbookDir, DEMO_RESULTS_WORKBOOK_NAME);

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let worker: RenderWorker;

beforeAll(async () => {
  writeFileSync(workbookPath, await demoResultsWorkbook());
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  worker = await startTestRenderWorker(world.database.db, reportStorage(reportsDir));
  server = await serve(world.app);
  browser = await launchChromium();
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  await closeSigningBrowsers();
  await worker?.close();
  await world?.close();
  for (const dir of [reportsDir, signingDir, workbookDir]) rmSync(dir, { recursive: true, force: true });
});

const shot = (page: Page, name: string) =>
  page.screenshot({ path: path.join(SCREENSHOT_DIR, `multi-attribute-flow-${name}.png`), fullPage: true });

async function openPerson(
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
    if (message.type() === 'error' || message.text().includes('Content Security Policy'))
      errors.push(message.text());
  });
  page.on('pageerror', (error) => errors.push((error as Error).message));
  await page.goto(`${server.url}/signin`);
  await ui.getByLabel('E-mail address').fill(world.users[name]!.email);
  await ui.getByLabel('Password').fill(world.users[name]!.password);
  await ui.getByRole('button', { name: 'Sign in' }).click();
  await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();
  return { context, page, ui, errors };
}

/** Clicks a control that submits a form and waits for the page it loads. */
async function submitAndLoad(page: Page, control: Locator): Promise<void> {
  await Promise.all([page.waitForNavigation({ timeout: 60_000 }), control.click()]);
}

/** Fills attribute group `position` of the study form as the analyst types it. */
async function fillAttribute(ui: Locator, position: number, attribute: StudyAttribute): Promise<void> {
  // Groups after the first carry " (attribute N)" in their labels (read by screen readers only).
  const field = (label: string) =>
    ui.getByLabel(position === 1 ? label : `${label} (attribute ${position})`, { exact: true });
  const number = (value: number | null) => (value === null ? '' : String(value));
  await field('Attribute measured').fill(attribute.name);
  await field('Unit').fill(attribute.unit);
  await field('Direction on storage').selectOption(attribute.direction);
  await field('Lower limit').fill(number(attribute.lowerLimit));
  await field('Upper limit').fill(number(attribute.upperLimit));
  await field('Working order').selectOption(number(attribute.workingOrder));
  await field('Reason for the working order').fill(attribute.workingOrderReason);
  await field('Results below the limit ("<LOQ", "< 0.05")').selectOption(attribute.censoredRule);
  await field('Stated value').fill(number(attribute.censoredValue));
  await field('Part in the mass balance').selectOption(attribute.massBalanceRole ?? '');
}

/** `text` as a RegExp source that matches it literally. */
const literally = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

/** A time as the analysis page writes it: "24 months", "1 month". */
const inMonths = (value: number) => `${Number(value.toPrecision(4))} month${value === 1 ? '' : 's'}`;

describe('a multi-attribute study from the study form to a signed report (issue 15)', () => {
  it('four attributes: form, upload, mapping, import, analysis, report, submit, sign, pdfsig', async () => {
    const recipe = RESULTS_DEMO_RECIPE.study;
    const analyst = await openPerson('analyst');
    const { page, ui } = analyst;

    // 1. The study, through the form: four attribute groups, the second to fourth added with
    // "Add another attribute" (each a round trip that keeps everything typed).
    await page.goto(`${server.url}/studies/new`);
    await ui.getByLabel('Title', { exact: true }).fill(recipe.title);
    await ui.getByLabel('Product', { exact: true }).fill(recipe.product);
    await fillAttribute(ui, 1, DEMO_ATTRIBUTES[0]!);
    for (let position = 2; position <= DEMO_ATTRIBUTES.length; position++) {
      await submitAndLoad(page, ui.getByRole('button', { name: 'Add another attribute' }));
      await ui.getByText(`Attribute ${position} was added to the form.`, { exact: false }).waitFor();
      await fillAttribute(ui, position, DEMO_ATTRIBUTES[position - 1]!);
    }
    // What was typed in the first groups survived the round trips.
    expect(await ui.getByLabel('Attribute measured', { exact: true }).inputValue()).toBe('Assay');
    expect(await ui.getByLabel('Stated value (attribute 2)', { exact: true }).inputValue()).toBe('0.025');
    await ui.getByLabel('Temperature (°C)', { exact: true }).fill(String(recipe.storageTemperatureC));
    await ui.getByLabel('Relative humidity (%)', { exact: true }).fill(String(recipe.storageHumidityPercent));
    await ui
      .getByLabel('Accelerated condition (°C)', { exact: true })
      .fill(String(recipe.acceleratedTemperatureC));
    await ui.getByLabel('Label storage', { exact: true }).selectOption(recipe.storageCategory!);
    await ui
      .getByLabel('Significant change at the accelerated condition', { exact: true })
      .selectOption(recipe.acceleratedChange!);
    await ui
      .getByLabel('Little or no change and little or no variability', { exact: true })
      .selectOption(recipe.littleChange!);
    await ui.getByLabel('Relevant supporting data', { exact: true }).selectOption(recipe.supportingData!);
    await ui.getByLabel('Basis of these statements', { exact: true }).fill(recipe.declarationBasis!);
    await ui.getByLabel('Batches', { exact: true }).fill(recipe.batches!.join('\n'));
    await ui.getByLabel('Notes', { exact: true }).fill(recipe.notes!);
    await shot(page, '1-study-form');
    await submitAndLoad(page, ui.getByRole('button', { name: 'Create study' }));
    await waitForUrl(page, /\/studies\/\d+([?#].*)?$/);
    await ui.getByText('The study was created.').waitFor();
    for (const attribute of DEMO_ATTRIBUTES)
      await ui.getByText(attribute.name, { exact: true }).first().waitFor();

    // 2. Upload the results workbook on the study page; the mapping screen opens.
    await ui.locator('input[type="file"]').setInputFiles(workbookPath);
    await ui.getByRole('button', { name: 'Upload and map columns' }).click();
    await waitForUrl(page, /\/uploads\/\d+\/map([?#].*)?$/);
    await ui.getByLabel('Time column').waitFor();
    const layout = ui.getByRole('radio', { name: /One column per attribute/ });
    await layout.check();
    // The island's guesses from the headers: each checked, and corrected (and noted) where wrong.
    const corrected: string[] = [];
    const choose = async (label: string | RegExp, wanted: string) => {
      const select = ui.getByLabel(label, { exact: true });
      const guessed = await select.inputValue();
      if (guessed !== wanted) {
        corrected.push(`${label}: guessed ${JSON.stringify(guessed)}, wanted ${JSON.stringify(wanted)}`);
        await select.selectOption(wanted);
      }
      expect(await select.inputValue()).toBe(wanted);
    };
    const c = DEMO_RESULT_COLUMNS;
    await choose('Time column', c.time);
    await choose('Unit of time', 'month');
    await choose('Value column', c.assay);
    await choose('Batch column (optional)', c.batch);
    await choose('Temperature column (optional)', c.temperature);
    await choose(/^Attribute of the value column \(/, DEMO_ATTRIBUTES[0]!.name);
    const further = [c.qxA, c.qxB, c.water];
    for (const [index, column] of further.entries()) {
      const number = index + 2;
      if ((await ui.getByLabel(`Value column ${number}`, { exact: true }).count()) === 0)
        await ui.getByRole('button', { name: 'Add a value column' }).click();
      await choose(`Value column ${number}`, column);
      await choose(`Attribute of value column ${number}`, DEMO_ATTRIBUTES[index + 1]!.name);
      expect(await ui.getByLabel(`Unit of value column ${number}`, { exact: true }).inputValue()).toBe(
        DEMO_ATTRIBUTES[index + 1]!.unit,
      );
    }
    expect(await ui.getByLabel('Value column 5', { exact: true }).count()).toBe(0);
    // The headers name the attributes ("Impurity QX-A (% LC)"), so every guess was right.
    expect(corrected).toEqual([]);
    // Every result of every attribute is a point, those reported "<0.05" included; a series per
    // attribute, batch and condition.
    const rows = demoResultRows();
    const points = rows.length * DEMO_ATTRIBUTES.length;
    const seriesPerAttribute = new Set(rows.map((row) => `${row.batch}|${row.temperatureC}`)).size;
    const series = seriesPerAttribute * DEMO_ATTRIBUTES.length;
    await ui
      .getByRole('status')
      .filter({ hasText: `The whole sheet reads cleanly: ${points} points in ${series} series.` })
      .waitFor();
    await shot(page, '2-mapping');
    await ui.getByRole('button', { name: 'Import as dataset' }).click();
    const summary = ui.getByRole('heading', { name: /^Dataset #\d+ stored$/ });
    await summary.waitFor({ timeout: 60_000 });
    await ui
      .getByRole('status')
      .filter({
        hasText: new RegExp(
          `^Dataset #\\d+ stored: ${points} points in ${series} series\\. Next: run the analysis\\.$`,
        ),
      })
      .waitFor();
    await shot(page, '3-imported');

    // 3. The analysis: the verdict as the stored run has it.
    await ui.getByRole('button', { name: 'Run the analysis' }).click();
    // The analysis page opens, or the refusal is shown beside the button: fail with its words.
    await expect
      .poll(
        async () =>
          /\/analyses\/\d+$/.test(page.url())
            ? 'opened'
            : ((await page.$eval('[role="alert"]', (alert) => alert.textContent).catch(() => null)) ??
              'running'),
        { timeout: 90_000, interval: 100 },
      )
      .toBe('opened');
    await waitForUrl(page, /\/analyses\/\d+$/);
    const runId = Number(/\/analyses\/(\d+)$/.exec(page.url())?.[1]);
    await ui.getByRole('heading', { name: /^Analysis #\d+/ }).waitFor();
    const [run] = await world.database.db
      .select({ result: analysisRuns.result })
      .from(analysisRuns)
      .where(eq(analysisRuns.id, runId));
    const stored = (run!.result as StoredAnalysisResult).studyShelfLife!;
    expect(stored.attributes.map((entry) => entry.attribute.name)).toEqual(
      DEMO_ATTRIBUTES.map((attribute) => attribute.name),
    );
    expect(stored.proposedShelfLife).not.toBeNull();
    expect(stored.timeUnit).toMatch(/^months?$/);
    expect(stored.limitingAttributes.length).toBeGreaterThan(0);
    const proposed = inMonths(stored.proposedShelfLife!);
    const verdict = (await ui.locator('#study-verdict').textContent()) ?? '';
    expect(verdict).toContain(`Proposed shelf life of the study: ${proposed}`);
    expect(verdict).toContain(`limited by ${stored.limitingAttributes[0]}`);
    for (const name of stored.limitingAttributes) expect(verdict).toContain(name);
    // "Shelf life by attribute": a row per attribute, the limiting one(s) marked, each with its own proposal.
    await ui.getByRole('heading', { name: 'Shelf life by attribute' }).waitFor();
    const table = ui.locator('#attribute-shelf-life-table');
    expect(await table.locator('tbody tr').count()).toBe(DEMO_ATTRIBUTES.length);
    for (const entry of stored.attributes) {
      const row = table
        .locator('tbody tr')
        .filter({ hasText: `${entry.attribute.name} (${entry.attribute.unit})` });
      expect(await row.locator('[data-proposed-value]').getAttribute('data-proposed-value')).toBe(
        entry.proposedShelfLife === null ? '' : String(entry.proposedShelfLife),
      );
      expect(await row.getAttribute('data-limiting')).toBe(entry.limiting ? 'true' : null);
    }
    const limitingRows = await table.locator('tbody tr[data-limiting="true"]').allTextContents();
    expect(limitingRows.length).toBe(stored.limitingAttributes.length);
    // A result below the reporting threshold is shown by its text in a table (QX-A fits it at the
    // stated value, QX-B leaves it out), never as a number.
    for (const name of ['Impurity QX-A', 'Impurity QX-B']) {
      const section = ui.locator(`section[data-attribute="${name}"]`);
      const cells = await section.locator('table td').allTextContents();
      expect(
        cells.some((text) => text.trim().startsWith('<0.05')),
        name,
      ).toBe(true);
    }
    const qxaCells = await ui.locator('section[data-attribute="Impurity QX-A"] table td').allTextContents();
    // The stated value is printed to the table's 4 significant figures ("0.02500").
    expect(qxaCells.some((text) => /^<0\.05 \(fitted at 0\.0250*\)$/.test(text.trim()))).toBe(true);
    // As a person sees it: QX-B's first series opened, then the data table of its fitted curves.
    const qxbFirstSeries = ui.locator('section[data-attribute="Impurity QX-B"] details[id$="series-0"]');
    await qxbFirstSeries.locator('summary').first().click();
    const figureData = qxbFirstSeries.locator('details[data-figure-data$="series-0-curves"]');
    await figureData.locator('summary').click();
    await figureData.getByRole('cell', { name: '<0.05', exact: true }).first().waitFor({ state: 'visible' });
    await figureData.screenshot({
      path: path.join(SCREENSHOT_DIR, 'multi-attribute-flow-4b-censored-in-table.png'),
    });
    // Mass balance: assay plus QX-A and QX-B against the initial value, with a trend per series.
    const massBalance = ui.locator('#mass-balance');
    await massBalance.getByRole('heading', { name: 'Mass balance', level: 2 }).waitFor();
    const massText = (await massBalance.textContent()) ?? '';
    expect(massText).toContain('Total = Assay + Impurity QX-A and Impurity QX-B');
    expect(massText).toMatch(/Trend of the total: /);
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'multi-attribute-flow-4-verdict.png') });
    await ui
      .locator('section[aria-labelledby="mass-balance-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'multi-attribute-flow-5-mass-balance.png') });

    // 4. The report: rendered, downloaded, read with pdftotext.
    const form = ui.locator('#create-report');
    await form.scrollIntoViewIfNeeded();
    await form.getByLabel(/Title/).fill('Quillatrine 40 mg — stability report, all attributes');
    await submitAndLoad(page, form.getByRole('button', { name: 'Create report' }));
    await waitForUrl(page, /\/app\/reports\/\d+$/);
    await expect
      .poll(() => ui.locator('tr[data-version="1"] [data-status]').getAttribute('data-status'), {
        timeout: 90_000,
      })
      .toBe('ready');
    await shot(page, '6-report-ready');
    const unsigned = await analyst.context.waitForDownload(() =>
      ui.getByRole('link', { name: 'Download PDF (unsigned)' }).click(),
    );
    const pages = execFileSync('pdftotext', ['-layout', unsigned.path, '-'], { encoding: 'utf8' })
      .split('\f')
      .map((text) => text.replace(/[ \t]+/g, ' '));
    // The summary page as an image, to look at.
    execFileSync('pdftoppm', [
      ...['-f', '1', '-l', '1', '-png', '-r', '80', '-singlefile'],
      unsigned.path,
      path.join(SCREENSHOT_DIR, 'multi-attribute-flow-6b-report-summary-page'),
    ]);
    // The one-page summary comes first: the proposal, the limiting attribute, a conclusion per attribute.
    const summaryPage = pages[0]!;
    expect(summaryPage).toContain('STABILITY REPORT · SUMMARY');
    expect(summaryPage).toContain(
      `${proposed} at ${recipe.storageTemperatureC} °C / ${recipe.storageHumidityPercent} % RH`,
    );
    expect(summaryPage).toMatch(/Limiting attributes?: /);
    for (const name of stored.limitingAttributes) expect(summaryPage).toContain(name);
    for (const entry of stored.attributes) {
      const name = literally(entry.attribute.name);
      const conclusion = new RegExp(`${name} \\([^\\n]*?\\): ([^.—\\n]+?)( — limiting)?\\.\\n`).exec(
        summaryPage,
      );
      expect(conclusion?.[1], entry.attribute.name).toBe(inMonths(entry.proposedShelfLife!));
      expect(conclusion?.[2] !== undefined, entry.attribute.name).toBe(entry.limiting);
    }
    expect(summaryPage).toMatch(/Mass balance \(Assay plus Impurity QX-A and Impurity QX-B\)/);
    // Each attribute has its own numbered section with its Q1E outcome at the long-term condition.
    stored.attributes.forEach((entry, index) => {
      const heading = new RegExp(`^ ?${index + 1}\\. ${literally(entry.attribute.name)}$`, 'm');
      const section = pages.find((text) => heading.test(text));
      expect(section, `section ${index + 1}. ${entry.attribute.name}`).toBeDefined();
      expect(section).toContain(
        `Proposed shelf life at ${recipe.storageTemperatureC} °C (long-term): ${inMonths(entry.proposedShelfLife!)}.`,
      );
    });
    const whole = pages.join('\n');
    expect(whole).toMatch(/^ ?Mass balance$/m);
    expect(whole).toMatch(/^ ?Temperature dependence$/m);
    // The censored results are listed with their text and the rule that handled them.
    expect(whole).toMatch(
      /Impurity QX-A · QT-\d{4} @ \d+ °C \d+ months? <0\.05 .+ fitted at 0\.025 % of label claim/,
    );
    expect(whole).toMatch(/Impurity QX-B · QT-\d{4} @ \d+ °C \d+ months? <0\.05 /);

    // Submit to the reviewer.
    await submitAndLoad(page, ui.getByRole('link', { name: 'Review and signing →' }));
    await ui.getByLabel(/Test reviewer/).check();
    await ui
      .getByLabel(/Note to the reviewers/)
      .fill('All four attributes; QX-A and QX-B below 0.05 % are censored.');
    await submitAndLoad(page, ui.getByRole('button', { name: 'Submit for review' }));
    await ui.getByRole('status').filter({ hasText: 'Submitted for review' }).waitFor();

    // 5. The reviewer signs from the queue.
    const reviewer = await openPerson('reviewer');
    await reviewer.page.goto(`${server.url}/review`);
    await reviewer.ui.getByRole('heading', { name: 'Waiting for my review' }).waitFor();
    await submitAndLoad(reviewer.page, reviewer.ui.getByRole('link', { name: /^RL-\d{4}-\d{4} v1$/ }));
    const reviewedSha = await reviewer.ui.locator('[data-reviewed-sha256]').textContent();
    for (const box of await reviewer.ui.locator('[data-sign-checklist] input[type="checkbox"]').all())
      await box.check();
    await reviewer.ui.getByLabel('Meaning of your signature').selectOption('Approved');
    await reviewer.ui
      .getByLabel(/Comment/)
      .fill('Each attribute, the mass balance and the censored results checked.');
    await reviewer.ui.getByLabel('User ID (your e-mail address)').fill(world.users.reviewer!.email);
    await reviewer.ui.getByLabel('Password', { exact: true }).fill(world.users.reviewer!.password);
    await submitAndLoad(reviewer.page, reviewer.ui.getByRole('button', { name: 'Sign', exact: true }));
    await reviewer.ui
      .getByRole('status')
      .filter({ hasText: 'Signed (Approved)' })
      .waitFor({ timeout: 60_000 });
    await shot(reviewer.page, '7-signed');
    const signed = await reviewer.context.waitForDownload(() =>
      reviewer.ui.getByRole('link', { name: 'Download the signed PDF' }).click(),
    );
    expect(signed.suggestedFilename).toMatch(/^RL-\d{4}-\d{4}-v1-signed\.pdf$/);
    const [signature] = await world.database.db
      .select()
      .from(signatures)
      .where(eq(signatures.signerId, world.users.reviewer!.id));
    expect(sha256Hex(readFileSync(signed.path))).toBe(signature!.signedPdfSha256);
    expect(signature!.reviewedPdfSha256).toBe(reviewedSha);
    expect(sha256Hex(readFileSync(unsigned.path))).toBe(reviewedSha);
    const signedText = execFileSync('pdftotext', [signed.path, '-'], { encoding: 'utf8' });
    expect(signedText).toContain('Test reviewer');
    expect(signedText).toContain('Approved');
    const pdfsig = execFileSync('pdfsig', [signed.path], {
      encoding: 'utf8',
      env: { ...process.env, LC_ALL: 'C' },
    });
    expect(pdfsig).toContain('Signature Validation: Signature is Valid.');
    expect(pdfsig).toContain('Total document signed');

    expect([...analyst.errors, ...reviewer.errors]).toEqual([]);
    await analyst.context.close();
    await reviewer.context.close();
  });
});
