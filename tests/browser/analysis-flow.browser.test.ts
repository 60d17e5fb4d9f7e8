import path from 'node:path';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, newPage, SCREENSHOT_DIR, serve, waitForUrl } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

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
  const select = locate(page).getByLabel(label);
  const option = select.locator('option', { hasText: text }).first();
  await select.selectOption((await option.getAttribute('value'))!);
}

/** Scrolls every figure into view, so each lazily drawn chart is drawn, and waits for the SVGs. */
async function drawAllFigures(page: Page, expected: number) {
  const ui = locate(page);
  for (const figure of await ui.locator('[data-island="analysis-figure"]').all()) {
    if (!(await figure.isVisible())) continue;
    await figure.scrollIntoViewIfNeeded();
    await figure.locator('svg, [role="alert"]').first().waitFor({ timeout: 15_000 });
  }
  await expect
    .poll(() => ui.locator('.vega-figure[data-state="drawn"] svg').count(), { timeout: 30_000 })
    .toBeGreaterThanOrEqual(expected);
}

describe('from a new study to a recorded analysis in Chromium', () => {
  it('creates a study, uploads the sample workbook, maps columns, runs the analysis, sees figures and results', async () => {
    const page = await newPage(browser, { viewport: { width: 1280, height: 900 } });
    const ui = locate(page);
    const problems: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error' || message.text().includes('Content Security Policy'))
        problems.push(message.text());
    });
    page.on('pageerror', (error) => problems.push((error as Error).message));

    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.analyst!.email);
    await ui.getByLabel('Password').fill(world.users.analyst!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();

    await page.goto(`${server.url}/studies/new`);
    await ui.getByLabel('Title').fill('Orvellin 250 mg — stability (browser test)');
    await ui.getByLabel('Product').fill('Orvellin 250 mg film-coated tablets');
    await ui.getByLabel('Attribute measured').fill('Assay');
    await ui.getByLabel('Unit', { exact: true }).fill('% of label claim');
    await ui.getByLabel('Direction on storage').selectOption('decreasing');
    await ui.getByLabel('Lower limit').fill('95');
    await ui.getByLabel('Temperature (°C)').fill('25');
    await ui.getByLabel('Relative humidity (%)').fill('60');
    await ui.getByLabel('Batches').fill('OR-2401\nOR-2402\nOR-2403');
    await ui.getByRole('button', { name: 'Create study' }).click();
    await waitForUrl(page, /\/studies\/\d+([?#].*)?$/);
    await ui.getByText('The study was created.').waitFor();

    await ui.locator('input[type="file"]').setInputFiles(SAMPLE_WORKBOOK);
    await ui.getByRole('button', { name: 'Upload and map columns' }).click();
    await waitForUrl(page, /\/uploads\/\d+\/map([?#].*)?$/);
    await ui.getByLabel('Time column').waitFor();
    await chooseColumn(page, 'Time column', 'Month');
    await ui.getByLabel('Unit of time').selectOption('month');
    await chooseColumn(page, 'Value column', 'Assay');
    await ui.getByLabel('Unit of the values').fill('% of label claim');
    await chooseColumn(page, 'Batch column (optional)', 'Batch');
    await chooseColumn(page, 'Temperature column (optional)', 'Temperature');
    await shot(page, 'analysis-flow-1-mapping.png');
    await ui.getByRole('button', { name: 'Import as dataset' }).click();
    await ui.getByRole('button', { name: 'Run the analysis' }).click();

    await waitForUrl(page, /\/analyses\/\d+$/, { timeout: 60_000 });
    await ui.getByRole('heading', { name: /^Analysis #\d+/ }).waitFor();
    const results = ui.locator('#results-table');
    await expect.poll(() => results.locator('tbody tr').count()).toBeGreaterThanOrEqual(3);
    expect(await ui.getByText('support, but do not replace, qualified judgement').first().isVisible()).toBe(
      true,
    );
    await expect
      .poll(() => ui.locator('#method-statement').textContent())
      .toContain('Rateledger kinetics engine');
    // The first series is open: its straight-line plots, fitted curves and residuals, plus Q1E and Arrhenius.
    await drawAllFigures(page, 5);
    expect(await ui.locator('[data-figure-id="series-0-linearised"] svg').textContent()).toMatch(
      /R² = 0\.\d{4}/,
    );
    expect(await ui.locator('[data-figure-id="series-0-curves"] svg').textContent()).toContain('first order');
    expect(await ui.locator('[data-figure-id="arrhenius"] svg').textContent()).toContain('1000/T');
    expect(await ui.locator('[data-figure-id^="q1e-"] svg').first().textContent()).toContain(
      'lower limit 95',
    );
    await shot(page, 'analysis-flow-2-analysis.png');
    // Tooltips work under the strict CSP (no injected <style>, styled by the bundled stylesheet).
    await ui
      .locator('[data-figure-id="series-0-curves"] svg g.mark-symbol path')
      .nth(2)
      .hover({ force: true });
    await expect.poll(() => ui.locator('#vg-tooltip-element.visible').textContent()).toContain('value');
    // WCAG 1.4.13: the pointer can move onto the tooltip and it stays; Escape hides it.
    const box = await page.$eval('#vg-tooltip-element', (element) => {
      const { left, top, width, height } = element.getBoundingClientRect();
      return { x: left + width / 2, y: top + height / 2 };
    });
    await page.mouse.move(box.x, box.y, { steps: 5 });
    await new Promise((resolve) => setTimeout(resolve, 1_000));
    expect(await page.$('#vg-tooltip-element.visible')).not.toBeNull();
    await page.keyboard.press('Escape');
    expect(await page.$('#vg-tooltip-element.visible')).toBeNull();

    // Fix first order (as shelf-life work does), so every derived figure is reported.
    await ui.getByLabel('Reaction order').selectOption('1');
    // The new run's address has the same shape as this one's: wait for the navigation itself.
    await Promise.all([
      page.waitForNavigation(),
      ui.getByRole('button', { name: 'Run the analysis' }).click(),
    ]);
    expect(page.url()).toMatch(/\/analyses\/\d+$/);
    await expect
      .poll(() =>
        ui.locator('#results-table [data-key^="derived|"][data-value]:not([data-value=""])').count(),
      )
      .toBeGreaterThan(3);
    await drawAllFigures(page, 5);
    await shot(page, 'analysis-flow-3-first-order.png');
    // Close-ups a person can read at full size.
    await page.evaluate(() => window.scrollTo(0, 0));
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3-top.png') });
    await ui
      .locator('section[aria-labelledby="results-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3a-results-table.png') });
    await ui
      .locator('#series-0')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3b-first-series.png') });
    await ui
      .locator('section[aria-labelledby="shelf-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3c-shelf-life.png') });
    await ui
      .locator('section[aria-labelledby="arrhenius-heading"]')
      .screenshot({ path: path.join(SCREENSHOT_DIR, 'analysis-flow-3d-arrhenius.png') });

    // Exclude a point with a reason: a new run supersedes this one.
    const firstOrderUrl = page.url();
    await ui.locator('#exclude-point').selectOption({ index: 2 });
    await ui.locator('#exclude-reason').fill('Vial cracked at this pull (invented deviation DV-BT-1).');
    await ui.getByRole('button', { name: 'Exclude the point and re-run' }).click();
    await waitForUrl(page, /\/analyses\/\d+#exclusions$/);
    const runNumber = (url: string) => Number(/\/analyses\/(\d+)/.exec(url)?.[1]);
    expect(runNumber(page.url())).toBeGreaterThan(runNumber(firstOrderUrl));
    await expect.poll(() => ui.locator('#exclusions').textContent()).toContain('DV-BT-1');
    await page.goto(firstOrderUrl);
    await ui.getByText('Superseded', { exact: true }).waitFor();
    await drawAllFigures(page, 5);
    await shot(page, 'analysis-flow-4-superseded.png');

    expect(problems).toEqual([]);
  });
});
