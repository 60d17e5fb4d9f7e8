import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

// The whole flow a new analyst follows with the sample workbook that the README links.
const SAMPLE_WORKBOOK = path.resolve(
  import.meta.dirname,
  '../../docs/sample-workbook/orvellin-stability.xlsx',
);

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await world?.close();
});

async function shot(page: Page, name: string) {
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, name), fullPage: true });
}

/** Chooses the option of a labelled select whose text contains `text` (the header of a column). */
async function chooseColumn(page: Page, label: string, text: string) {
  const select = page.getByLabel(label);
  const option = select.locator('option', { hasText: text }).first();
  await select.selectOption(await option.getAttribute('value'));
}

/** Scrolls every figure into view, so each lazily drawn chart is drawn, and waits for the SVGs. */
async function drawAllFigures(page: Page, expected: number) {
  for (const figure of await page.locator('[data-island="analysis-figure"]').all()) {
    if (!(await figure.isVisible())) continue;
    await figure.scrollIntoViewIfNeeded();
    await figure.locator('svg, [role="alert"]').first().waitFor({ timeout: 15_000 });
  }
  await expect
    .poll(() => page.locator('.vega-figure[data-state="drawn"] svg').count(), { timeout: 30_000 })
    .toBeGreaterThanOrEqual(expected);
}

describe('from a new study to a recorded analysis in Chromium', () => {
  it('creates a study, uploads the sample workbook, maps columns, runs the analysis, sees figures and results', async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    const problems: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error' || message.text().includes('Content Security Policy'))
        problems.push(message.text());
    });
    page.on('pageerror', (error) => problems.push(error.message));

    await page.goto(`${server.url}/signin`);
    await page.getByLabel('E-mail address').fill(world.users.analyst!.email);
    await page.getByLabel('Password').fill(world.users.analyst!.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: /Good to see you/ }).waitFor();

    await page.goto(`${server.url}/studies/new`);
    await page.getByLabel('Title').fill('Orvellin 250 mg — stability (browser test)');
    await page.getByLabel('Product').fill('Orvellin 250 mg film-coated tablets');
    await page.getByLabel('Attribute measured').fill('Assay');
    await page.getByLabel('Unit', { exact: true }).fill('% of label claim');
    await page.getByLabel('Direction on storage').selectOption('decreasing');
    await page.getByLabel('Lower limit').fill('95');
    await page.getByLabel('Temperature (°C)').fill('25');
    await page.getByLabel('Relative humidity (%)').fill('60');
    await page.getByLabel('Batches').fill('OR-2401\nOR-2402\nOR-2403');
    await page.getByRole('button', { name: 'Create study' }).click();
    await page.waitForURL(/\/studies\/\d+([?#].*)?$/);
    await page.getByText('The study was created.').waitFor();

    await page.locator('input[type="file"]').setInputFiles(SAMPLE_WORKBOOK);
    await page.getByRole('button', { name: 'Upload and map columns' }).click();
    await page.waitForURL(/\/uploads\/\d+\/map([?#].*)?$/);
    await page.getByLabel('Time column').waitFor();
    await chooseColumn(page, 'Time column', 'Month');
    await page.getByLabel('Unit of time').selectOption('month');
    await chooseColumn(page, 'Value column', 'Assay');
    await page.getByLabel('Unit of the values').fill('% of label claim');
    await chooseColumn(page, 'Batch column (optional)', 'Batch');
    await chooseColumn(page, 'Temperature column (optional)', 'Temperature');
    await shot(page, 'analysis-flow-1-mapping.png');
    await page.getByRole('button', { name: 'Import as dataset' }).click();
    await page.getByRole('button', { name: 'Run the analysis' }).click();

    await page.waitForURL(/\/analyses\/\d+$/, { timeout: 60_000 });
    await page.getByRole('heading', { name: /^Analysis #\d+/ }).waitFor();
    const results = page.locator('#results-table');
    await expect.poll(() => results.locator('tbody tr').count()).toBeGreaterThanOrEqual(3);
    expect(await page.getByText('support, but do not replace, qualified judgement').first().isVisible()).toBe(
      true,
    );
    await expect
      .poll(() => page.locator('#method-statement').textContent())
      .toContain('Rateledger kinetics engine');
    // The first series is open: its straight-line plots, fitted curves and residuals, plus Q1E and Arrhenius.
    await drawAllFigures(page, 5);
    expect(await page.locator('[data-figure-id="series-0-linearised"] svg').textContent()).toMatch(
      /R² = 0\.\d{4}/,
    );
    expect(await page.locator('[data-figure-id="series-0-curves"] svg').textContent()).toContain(
      'first order',
    );
    expect(await page.locator('[data-figure-id="arrhenius"] svg').textContent()).toContain('1000/T');
    expect(await page.locator('[data-figure-id^="q1e-"] svg').first().textContent()).toContain(
      'lower limit 95',
    );
    await shot(page, 'analysis-flow-2-analysis.png');
    // Tooltips work under the strict CSP (no injected <style>, styled by the bundled stylesheet).
    await page
      .locator('[data-figure-id="series-0-curves"] svg g.mark-symbol path')
      .nth(2)
      .hover({ force: true });
    await expect.poll(() => page.locator('#vg-tooltip-element.visible').textContent()).toContain('value');

    // Fix first order (as shelf-life work does), so every derived figure is reported.
    await page.getByLabel('Reaction order').selectOption('1');
    await page.getByRole('button', { name: 'Run the analysis' }).click();
    await page.waitForURL(/\/analyses\/\d+$/);
    await expect
      .poll(() =>
        page.locator('#results-table [data-key^="derived|"][data-value]:not([data-value=""])').count(),
      )
      .toBeGreaterThan(3);
    await drawAllFigures(page, 5);
    await shot(page, 'analysis-flow-3-first-order.png');
    // Close-ups a person can read at full size.
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3-top.png') });
    await page
      .locator('section[aria-labelledby="results-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3a-results-table.png') });
    await page
      .locator('#series-0')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3b-first-series.png') });
    await page
      .locator('section[aria-labelledby="shelf-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3c-shelf-life.png') });
    await page
      .locator('section[aria-labelledby="arrhenius-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3d-arrhenius.png') });

    // Exclude a point with a reason: a new run supersedes this one.
    const firstOrderUrl = page.url();
    await page.locator('#exclude-point').selectOption({ index: 2 });
    await page.locator('#exclude-reason').fill('Vial cracked at this pull (invented deviation DV-BT-1).');
    await page.getByRole('button', { name: 'Exclude the point and re-run' }).click();
    await page.waitForURL(/\/analyses\/\d+#exclusions$/);
    const runNumber = (url: string) => Number(/\/analyses\/(\d+)/.exec(url)?.[1]);
    expect(runNumber(page.url())).toBeGreaterThan(runNumber(firstOrderUrl));
    await expect.poll(() => page.locator('#exclusions').textContent()).toContain('DV-BT-1');
    await page.goto(firstOrderUrl);
    await page.getByText('Superseded', { exact: true }).waitFor();
    await drawAllFigures(page, 5);
    await shot(page, 'analysis-flow-4-superseded.png');

    expect(problems).toEqual([]);
  });
});
