import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser, ElementHandle, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { startTestRenderWorker } from '../integration/render-fixture.ts';
import { studyThroughForm } from '../integration/study-flow-fixture.ts';
import {
  launchChromium,
  pressShortcut,
  SCREENSHOT_DIR,
  serve,
  TestContext,
  waitForUrl,
} from '../support/browser.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 17: upload → map → import → analyse → report → submit → sign with the keyboard alone.
 * Every step is Tab / Shift+Tab / Enter / Space / arrow keys and typing into the focused field;
 * the one exception is the file itself, handed to the focused file input (the operating
 * system's file dialog is not part of the page). Nothing is clicked and no element is focused
 * by script. After each step that replaces part of a page or submits, the test checks where
 * focus landed (the result's heading, the error summary or the field — never <body> when a
 * part of the page was replaced) and what a person using a screen reader is told: the page's
 * title, and the text of the live region, alert or status message.
 */

const SAMPLE_WORKBOOK = path.resolve(
  import.meta.dirname,
  '../../docs/sample-workbook/orvellin-stability.xlsx',
);
const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-keyboard-flow-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-keyboard-flow-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let worker: RenderWorker;
let studyId: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  worker = await startTestRenderWorker(world.database.db, reportStorage(reportsDir));
  // The study exists (its form is another test's); the flow starts on its page.
  const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
  studyId = await studyThroughForm(agent, {
    title: 'Orvellin 250 mg — keyboard-only flow',
    product: 'Orvellin 250 mg film-coated tablets',
    upperLimit: '',
    batches: 'OR-2401, OR-2402, OR-2403',
  });
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await closeSigningBrowsers();
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

type TextMatch = string | RegExp;
const matches = (text: string, want: TextMatch) =>
  typeof want === 'string' ? text === want : want.test(text);

interface Focused {
  /** Role and accessible name as Chromium's accessibility tree gives them to a screen reader. */
  role: string;
  name: string;
  tag: string;
  id: string;
  /** Its text, which a screen reader reads when an element without a name of its own takes focus. */
  text: string;
  invalid: boolean;
}

/** The focused element, with its role and name from the accessibility tree. */
async function focused(page: Page): Promise<Focused> {
  const handle = await page.evaluateHandle(() => document.activeElement ?? document.body);
  try {
    const element = handle.asElement();
    const node = element
      ? await page.accessibility.snapshot({ root: element, interestingOnly: false })
      : null;
    const facts = await page.evaluate(
      (element) => ({
        tag: (element as Element).tagName.toLowerCase(),
        id: (element as Element).id,
        text: ((element as Element).textContent ?? '').replace(/\s+/g, ' ').trim(),
        invalid: (element as Element).getAttribute('aria-invalid') === 'true',
      }),
      handle,
    );
    return { role: node?.role ?? '', name: node?.name ?? '', ...facts };
  } finally {
    await handle.dispose();
  }
}

const describeFocus = (focus: Focused) =>
  `${focus.tag}${focus.id ? `#${focus.id}` : ''} (${focus.role} "${focus.name}")`;

/**
 * Presses Tab (or Shift+Tab) until the focused element has `role` and a name matching `name`,
 * at most `max` times; returns the number of presses. Fails naming the elements passed.
 */
async function tabTo(
  page: Page,
  role: string,
  name: TextMatch,
  options: { max?: number; backwards?: boolean } = {},
): Promise<number> {
  const passed: string[] = [];
  const max = options.max ?? 80;
  for (let presses = 1; presses <= max; presses++) {
    if (options.backwards) {
      await page.keyboard.down('Shift');
      await page.keyboard.press('Tab');
      await page.keyboard.up('Shift');
    } else await page.keyboard.press('Tab');
    const focus = await focused(page);
    if (focus.role === role && matches(focus.name, name)) return presses;
    passed.push(describeFocus(focus));
  }
  throw new Error(
    `${max} Tabs did not reach ${role} "${name}"; focus passed:\n  ${passed.slice(-25).join('\n  ')}`,
  );
}

/**
 * Text fields and selects whose edge is under 3:1 against what is behind them (WCAG 1.4.11
 * non-text contrast; the ratio is WCAG 2.1's relative-luminance contrast). Empty when all pass.
 */
async function weakFieldEdges(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const rgb = (css: string) => (css.match(/[\d.]+/g) ?? []).map(Number);
    const luminance = ([r, g, b]: number[]) => {
      const channel = (value: number) => {
        const c = value / 255;
        return c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
      };
      return 0.2126 * channel(r!) + 0.7152 * channel(g!) + 0.0722 * channel(b!);
    };
    const ratio = (a: number[], b: number[]) => {
      const [light, dark] = [luminance(a), luminance(b)].sort((x, y) => y - x);
      return (light! + 0.05) / (dark! + 0.05);
    };
    const behind = (element: Element): number[] => {
      for (let up = element.parentElement; up; up = up.parentElement) {
        const colour = rgb(getComputedStyle(up).backgroundColor);
        if (colour.length === 3 || colour[3] === 1) return colour.slice(0, 3);
      }
      return [255, 255, 255];
    };
    const weak: string[] = [];
    for (const field of document.querySelectorAll<HTMLElement>(
      'main input:not([type="hidden"]):not([type="checkbox"]):not([type="radio"]):not([type="file"]), main select, main textarea',
    )) {
      if (field.getClientRects().length === 0) continue;
      const edge = ratio(rgb(getComputedStyle(field).borderTopColor).slice(0, 3), behind(field));
      if (edge < 3)
        weak.push(
          `${field.tagName.toLowerCase()}#${field.id || field.getAttribute('name')} ${edge.toFixed(2)}:1`,
        );
    }
    return weak;
  });
}

/** Chooses the option of the focused (closed) select whose text matches, with the arrow keys. */
async function chooseWithArrows(page: Page, option: TextMatch): Promise<void> {
  const { texts, selected } = await page.evaluate(() => {
    const select = document.activeElement as HTMLSelectElement;
    if (select.tagName !== 'SELECT') throw new Error(`focus is on ${select.tagName}, not a select`);
    return { texts: [...select.options].map((entry) => entry.text.trim()), selected: select.selectedIndex };
  });
  const wanted = texts.findIndex((text) => matches(text, option));
  if (wanted < 0) throw new Error(`no option ${option} among ${texts.join(' | ')}`);
  const key = wanted > selected ? 'ArrowDown' : 'ArrowUp';
  for (let step = 0; step < Math.abs(wanted - selected); step++) await page.keyboard.press(key);
  expect(
    await page.evaluate(() => {
      const select = document.activeElement as HTMLSelectElement;
      return select.options[select.selectedIndex]?.text.trim();
    }),
  ).toBe(texts[wanted]);
}

/** The text of every live region, alert and status message on the page now (non-empty ones). */
async function announcements(page: Page): Promise<string[]> {
  return page.evaluate(() =>
    [
      ...document.querySelectorAll(
        '[aria-live]:not([aria-live="off"]), [role="status"], [role="alert"], [role="log"]',
      ),
    ]
      .map((region) => (region.textContent ?? '').replace(/\s+/g, ' ').trim())
      .filter((text, index, all) => text !== '' && all.indexOf(text) === index),
  );
}

/** Waits until some live region, alert or status message says `text`. */
async function waitForAnnouncement(page: Page, text: TextMatch, timeout = 30_000): Promise<string> {
  await expect
    .poll(async () => (await announcements(page)).some((said) => matches(said, text)), { timeout })
    .toBe(true);
  return (await announcements(page)).find((said) => matches(said, text))!;
}

/** Waits until focus is on an element with this id (or matching the predicate). */
async function waitForFocus(page: Page, id: string, timeout = 30_000): Promise<Focused> {
  await expect.poll(async () => (await focused(page)).id, { timeout }).toBe(id);
  return focused(page);
}

/** Presses Enter on the focused control and waits for the page it opens. */
async function enterAndLoad(page: Page, url: RegExp, timeout = 60_000): Promise<void> {
  await Promise.all([page.waitForNavigation({ timeout }), page.keyboard.press('Enter')]);
  await waitForUrl(page, url, { timeout });
}

const shot = (page: Page, name: string) =>
  page.screenshot({ path: path.join(SCREENSHOT_DIR, `keyboard-flow-${name}.png`) });

async function openPage(): Promise<{ context: TestContext; page: Page; errors: string[] }> {
  const context = await TestContext.open(browser, { viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  const errors: string[] = [];
  page.on('console', (message) => {
    // The sign form sent empty is refused with a 400 on purpose; Chromium logs that status.
    const refusedSign = /\/versions\/\d+\/sign$/.test(message.location()?.url ?? '');
    if (message.type() === 'error' && !refusedSign) errors.push(message.text());
  });
  page.on('pageerror', (error) => errors.push((error as Error).message));
  return { context, page, errors };
}

/**
 * A page opened by a navigation: it names itself in its title (what a screen reader announces on
 * arrival), focus is at the start of the document, and the first Tab reaches "Skip to main content".
 */
async function expectNewPage(page: Page, title: TextMatch): Promise<void> {
  await expect.poll(() => page.title(), { timeout: 10_000 }).toMatch(title);
  expect((await focused(page)).tag).toBe('body');
  await page.keyboard.press('Tab');
  expect(await focused(page)).toMatchObject({ role: 'link', name: 'Skip to main content' });
}

/** Signs in with the keyboard: Tab to each field, type, Enter. */
async function signInByKeyboard(page: Page, email: string, password: string) {
  await page.goto(`${server.url}/signin`);
  await tabTo(page, 'textbox', 'E-mail address');
  await page.keyboard.type(email);
  await tabTo(page, 'textbox', 'Password', { max: 1 });
  await page.keyboard.type(password);
  await enterAndLoad(page, /\/$/);
  await expectNewPage(page, /^Dashboard · Rateledger$/);
  expect(await page.$eval('h1', (heading) => heading.textContent)).toMatch(/Good to see you/);
}

describe('the whole flow with the keyboard alone (issue 17)', () => {
  it('the field-edge check catches a 1.5:1 border and passes the field border colour', async () => {
    const { context, page } = await openPage();
    await page.setContent(
      `<main style="background: #fff"><input id="faint" style="border: 1px solid #d8d4c8">
        <select id="field" style="border: 1px solid #7d786c"><option>x</option></select></main>`,
    );
    expect(await weakFieldEdges(page)).toEqual(['input#faint 1.48:1']);
    await context.close();
  });

  it('upload, map, import, analyse, report, submit, sign: each result focused and announced', async () => {
    const analyst = await openPage();
    const page = analyst.page;
    await signInByKeyboard(page, world.users.analyst!.email, world.users.analyst!.password);

    // The study: the main menu's "Studies", then the study's link in the list.
    await tabTo(page, 'link', 'Studies');
    await enterAndLoad(page, /\/studies$/);
    await expectNewPage(page, 'Studies · Rateledger');
    await tabTo(page, 'link', 'Orvellin 250 mg — keyboard-only flow');
    await enterAndLoad(page, new RegExp(`/studies/${studyId}$`));
    await expectNewPage(page, 'Orvellin 250 mg — keyboard-only flow · Rateledger');

    // Upload: Tab to the file input, hand it the file (the system's file dialog is not part of
    // the page), Tab to the button, Enter. The mapping workbench opens as a page of its own.
    await tabTo(page, 'button', /Workbook or CSV file/);
    const input = (await page.evaluateHandle(
      () => document.activeElement,
    )) as ElementHandle<HTMLInputElement>;
    expect(await input.evaluate((element) => element.type)).toBe('file');
    await input.uploadFile(SAMPLE_WORKBOOK);
    await input.dispose();
    await tabTo(page, 'button', 'Upload and map columns', { max: 1 });
    await enterAndLoad(page, /\/uploads\/\d+\/map$/);
    await expectNewPage(page, 'Map columns · orvellin-stability.xlsx · Rateledger');
    await page.waitForSelector('#map-timeColumn');
    expect(await weakFieldEdges(page)).toEqual([]);
    await shot(page, '1-mapping');

    // Map: each field reached by Tab in the order the form shows them (no field skipped, none
    // out of order), options chosen with the arrow keys; the unit typed over the study's.
    await tabTo(page, 'combobox', 'Time column');
    await chooseWithArrows(page, /· Month$/);
    await tabTo(page, 'combobox', 'Time format', { max: 1 });
    await tabTo(page, 'combobox', 'Unit of time', { max: 1 });
    await chooseWithArrows(page, /^months?$/i);
    await tabTo(page, 'combobox', 'Value column', { max: 1 });
    await chooseWithArrows(page, /· Assay/);
    await tabTo(page, 'textbox', 'Unit of the values', { max: 1 });
    await pressShortcut(page, 'Control+a');
    await page.keyboard.type('% of label claim');
    await tabTo(page, 'combobox', 'Batch column (optional)', { max: 1 });
    await chooseWithArrows(page, /· Batch$/);
    await tabTo(page, 'combobox', 'Temperature column (optional)', { max: 1 });
    await chooseWithArrows(page, /· Temperature/);
    // The check of the whole sheet is announced as the mapping changes.
    expect(await waitForAnnouncement(page, /^The whole sheet reads cleanly/)).toBe(
      'The whole sheet reads cleanly: 56 points in 9 series.',
    );

    // Import: the summary replaces the workbench; focus on its heading, the live region says it.
    await tabTo(page, 'button', 'Import as dataset');
    await page.keyboard.press('Enter');
    expect(await waitForFocus(page, 'import-summary')).toMatchObject({
      role: 'heading',
      name: expect.stringMatching(/^Dataset #\d+ stored$/),
    });
    expect(await waitForAnnouncement(page, /^Dataset #\d+ stored/)).toMatch(
      /^Dataset #\d+ stored: 56 points in 9 series\. Next: run the analysis\.$/,
    );
    await shot(page, '2-imported');

    // Analyse: the summary's button; the analysis opens as a page of its own.
    await tabTo(page, 'button', 'Run the analysis', { max: 10 });
    await enterAndLoad(page, /\/analyses\/\d+$/);
    await expectNewPage(page, /^Analysis #\d+ · Orvellin 250 mg film-coated tablets · Rateledger$/);
    await page.waitForSelector('#results-table tbody tr');

    // Report: the create form below the results (the skip link first, past the menus).
    await page.keyboard.press('Enter');
    expect((await focused(page)).tag).toBe('main');
    await tabTo(page, 'textbox', /^Title/, { max: 300 });
    await page.keyboard.type('Orvellin 250 mg — keyboard-only report');
    await tabTo(page, 'combobox', 'Paper', { max: 1 });
    await tabTo(page, 'button', 'Create report', { max: 1 });
    await enterAndLoad(page, /\/app\/reports\/\d+$/);
    await expectNewPage(page, /^RL-\d{4}-\d{4} Orvellin 250 mg — keyboard-only report · Rateledger$/);
    // It renders in the background: the live region says so, and says when it is ready.
    await waitForAnnouncement(page, 'Rendering — this page updates by itself.', 10_000);
    expect(await waitForAnnouncement(page, /^Version 1 is rendered and ready/, 60_000)).toBe(
      'Version 1 is rendered and ready: download it, or open "Review and signing".',
    );
    await page.waitForSelector('tr[data-version="1"] [data-status="ready"]');
    await shot(page, '3-report-ready');
    // Within /app a link replaces the page without loading a document: focus goes to the new
    // page's heading (the title alone is not announced), there and back.
    await tabTo(page, 'link', '← All reports');
    await page.keyboard.press('Enter');
    await waitForUrl(page, /\/app\/reports$/);
    await expect.poll(async () => (await focused(page)).tag, { timeout: 10_000 }).toBe('h1');
    expect(await focused(page)).toMatchObject({ role: 'heading', name: 'Reports' });
    await tabTo(page, 'link', /^RL-\d{4}-\d{4}$/);
    await page.keyboard.press('Enter');
    await waitForUrl(page, /\/app\/reports\/\d+$/);
    await expect.poll(async () => (await focused(page)).tag, { timeout: 10_000 }).toBe('h1');
    expect(await focused(page)).toMatchObject({
      role: 'heading',
      name: expect.stringMatching(/^RL-\d{4}-\d{4} · Orvellin 250 mg — keyboard-only report$/),
    });

    // Submit for review: the reviewer ticked with Space, a note typed, Enter on the button.
    await tabTo(page, 'link', 'Review and signing →');
    await enterAndLoad(page, /\/review\/reports\/\d+\/versions\/1$/);
    const reviewUrl = page.url();
    await expectNewPage(page, /^Review RL-\d{4}-\d{4} v1 · Rateledger$/);
    await tabTo(page, 'checkbox', /^Test reviewer/);
    await page.keyboard.press('Space');
    expect(await page.evaluate(() => (document.activeElement as HTMLInputElement).checked)).toBe(true);
    await tabTo(page, 'textbox', /^Note to the reviewers/, { max: 1 });
    await page.keyboard.type('Prepared and checked with the keyboard alone.');
    await tabTo(page, 'button', 'Submit for review', { max: 1 });
    await enterAndLoad(page, /\/review\/reports\/\d+\/versions\/1$/);
    // The same page again, so the title says nothing new: focus is on the notice, which says it.
    // (Chromium applies autofocus at its next rendering step, which may follow the load event.)
    expect(await waitForFocus(page, 'review-notice')).toMatchObject({
      id: 'review-notice',
      role: 'status',
      text: 'Submitted for review (round 1) to Test reviewer.',
    });
    expect(await announcements(page)).toEqual(['Submitted for review (round 1) to Test reviewer.']);
    await shot(page, '4-submitted');

    // The reviewer signs in and opens the report from the review queue.
    const reviewer = await openPage();
    const rpage = reviewer.page;
    await signInByKeyboard(rpage, world.users.reviewer!.email, world.users.reviewer!.password);
    await tabTo(rpage, 'link', 'Review');
    await enterAndLoad(rpage, /\/review$/);
    await expectNewPage(rpage, 'Review · Rateledger');
    await tabTo(rpage, 'link', /^RL-\d{4}-\d{4} v1$/);
    await enterAndLoad(rpage, /\/review\/reports\/\d+\/versions\/1$/);
    expect(rpage.url()).toBe(reviewUrl);
    await expectNewPage(rpage, /^Review RL-\d{4}-\d{4} v1 · Rateledger$/);

    // Sign sent empty: refused; focus on the error summary (an alert), whose first link takes
    // focus to the first refused field, marked invalid and described by its message.
    // Tab passes the PDF viewer on the way (no keyboard trap).
    await tabTo(rpage, 'button', 'Sign', { max: 120 });
    // ... and back across it with Shift+Tab to the breadcrumb before it, and forward again.
    await tabTo(rpage, 'link', /^RL-\d{4}-\d{4}$/, { max: 120, backwards: true });
    await tabTo(rpage, 'button', 'Sign', { max: 120 });
    await enterAndLoad(rpage, /\/review\/reports\/\d+\/versions\/1\/sign$/);
    expect(await waitForFocus(rpage, 'sign-error-summary')).toMatchObject({
      id: 'sign-error-summary',
      role: 'alert',
      name: 'Not signed: 2 problems to fix.',
    });
    expect(await announcements(rpage)).toEqual([
      'Not signed: 2 problems to fix. Choose the meaning of your signature.Enter your password.',
    ]);
    await shot(rpage, '5-sign-refused');
    expect(await weakFieldEdges(rpage)).toEqual([]);
    await tabTo(rpage, 'link', 'Choose the meaning of your signature.', { max: 1 });
    await rpage.keyboard.press('Enter');
    expect(await waitForFocus(rpage, 'sign-meaning')).toMatchObject({
      role: 'combobox',
      name: 'Meaning of your signature',
      invalid: true,
    });
    expect(
      await rpage.$eval(
        '#sign-meaning',
        (select) => document.getElementById(select.getAttribute('aria-describedby') ?? '')?.textContent,
      ),
    ).toBe('Choose the meaning of your signature.');

    // Signed: meaning chosen with the arrows, user ID and password typed, Enter in the password.
    await chooseWithArrows(rpage, 'Approved');
    await tabTo(rpage, 'textbox', /^Comment/, { max: 1 });
    await rpage.keyboard.type('Checked with the keyboard alone.');
    await tabTo(rpage, 'textbox', 'User ID (your e-mail address)', { max: 1 });
    await rpage.keyboard.type(world.users.reviewer!.email);
    await tabTo(rpage, 'textbox', 'Password', { max: 1 });
    await rpage.keyboard.type(world.users.reviewer!.password);
    await enterAndLoad(rpage, /\/review\/reports\/\d+\/versions\/1$/, 60_000);
    expect(await waitForFocus(rpage, 'review-notice')).toMatchObject({
      id: 'review-notice',
      role: 'status',
      text: expect.stringMatching(/^Signed \(Approved\) at .+\. The version is now locked\.$/),
    });
    expect(await announcements(rpage)).toEqual([
      expect.stringMatching(/^Signed \(Approved\) at .+\. The version is now locked\.$/),
    ]);
    await shot(rpage, '6-signed');

    expect([...analyst.errors, ...reviewer.errors]).toEqual([]);
    await analyst.context.close();
    await reviewer.context.close();
  });
});
