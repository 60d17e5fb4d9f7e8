import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { seedMultiAttributeRun } from '../integration/multi-attribute-run-seed.ts';
import { postReviewForm, startTestRenderWorker, waitForRender } from '../integration/render-fixture.ts';
import { makeAnalysisRun } from '../integration/reports-fixture.ts';
import { reportWithoutRender, tokenOf, uploadVeltrazine } from '../integration/study-flow-fixture.ts';
import { launchChromium, SCREENSHOT_DIR, serve, TestContext } from '../support/browser.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

/**
 * WCAG 2.0 and 2.1, levels A and AA, as far as axe-core can judge them (issue 17): every page,
 * server-rendered and under /app, is opened by the role that uses it — the demo roles analyst,
 * reviewer and administrator, plus an anonymous visitor — with its islands mounted, and axe-core
 * (the registry's `axe-core`, injected from node_modules) is run with the wcag2a, wcag2aa,
 * wcag21a and wcag21aa tags. A violation at any impact fails the test, which lists page, rule,
 * impact and the selectors of the offending elements. States a request produces (a form refused
 * with its errors, the import summary) are audited as pages of their own.
 */

const AXE_SOURCE = readFileSync(
  path.resolve(import.meta.dirname, '../../node_modules/axe-core/axe.min.js'),
  'utf8',
);
const WCAG_TAGS = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'];

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-accessibility-'));
process.env.REPORTS_DIR = reportsDir;

type Role = 'analyst' | 'reviewer' | 'admin';

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let worker: RenderWorker;
let smtp: TestSmtp;
let links: { invitation: string; passwordReset: string; verify: string };
let ids: {
  studyId: number;
  runId: number;
  uploadId: number;
  reportId: number;
  draftReportId: number;
  multiRunId: number;
};

beforeAll(async () => {
  world = await createTestWorld({
    analyst: ['analyst'],
    reviewer: ['reviewer'],
    admin: ['admin'],
    forgetful: ['analyst'],
  });
  smtp = await startTestSmtp(world.database.db);
  const storage = reportStorage(reportsDir);
  worker = await startTestRenderWorker(world.database.db, storage);
  const { runId, studyId } = await makeAnalysisRun(
    world.database.db,
    world.organisationId,
    world.users.analyst!,
  );
  const analyst = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
  // An upload not yet imported, for the mapping workbench.
  const uploadId = await uploadVeltrazine(analyst.agent, studyId);
  // A rendered report submitted to the reviewer (review queue, sign form, outbox mail) and a
  // second report left as a draft.
  const reportId = await reportWithoutRender(world, 'analyst', runId);
  const created = await analyst.agent
    .post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', await tokenOf(analyst.agent))
    .send({ title: 'Quillatrine 40 mg — accessibility audit report' });
  expect(created.status).toBe(201);
  const renderedId = created.body.reportId as number;
  await waitForRender(world.database.db, storage, renderedId);
  const submitted = await postReviewForm(analyst.agent, `/review/reports/${renderedId}/versions/1/submit`, {
    reviewerIds: String(world.users.reviewer!.id),
    note: 'For the accessibility audit.',
  });
  expect(submitted.status).toBe(303);
  await smtp.waitForMailTo(world.users.reviewer!.email, 10_000);
  // An invitation and a password reset, for the pages their links open.
  const admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  const adminToken = await tokenOf(admin);
  const invitee = `invitee.${world.organisationId}@test.example`;
  const invited = await admin
    .post('/admin/people/invite')
    .type('form')
    .send({ _csrf: adminToken, fullName: 'Test invitee', email: invitee, roles: 'analyst' });
  expect(invited.status).toBe(303);
  const reset = await admin
    .post(`/admin/people/${world.users.forgetful!.id}/password-reset`)
    .type('form')
    .send({ _csrf: adminToken });
  expect(reset.status).toBe(303);
  const tokenIn = async (address: string, kind: string) =>
    new RegExp(`/${kind}/([A-Za-z0-9_-]{43})`).exec(
      (await smtp.waitForMailTo(address, 10_000)).textBody,
    )![1]!;
  // The verification page with a report found.
  const reportNumber = (await analyst.agent.get(`/api/reports/${renderedId}`)).body.reportNumber as string;
  expect(reportNumber).toMatch(/^RL-\d{4}-\d{4}$/);
  links = {
    invitation: `/invitations/${await tokenIn(invitee, 'invitations')}`,
    passwordReset: `/password-reset/${await tokenIn(world.users.forgetful!.email, 'password-reset')}`,
    verify: `/verify?report=${reportNumber}`,
  };
  // A run of several attributes (issue 15 §1): its page has more regions, tables and figures.
  const multi = await seedMultiAttributeRun(world.database.db, world.organisationId, world.users.analyst!.id);
  ids = { studyId, runId, uploadId, reportId: renderedId, draftReportId: reportId, multiRunId: multi.runId };
  server = await serve(world.app);
  browser = await launchChromium();
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await server?.close();
  await worker?.close();
  await smtp?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

interface Violation {
  page: string;
  rule: string;
  impact: string;
  help: string;
  targets: string[];
}

/**
 * Runs axe-core on the page as it stands, and the checks below, and returns their violations,
 * labelled with `label`.
 */
async function audit(page: Page, label: string): Promise<Violation[]> {
  return [
    ...(await axeViolations(page, label)),
    ...(await keyboardChecks(page, label)),
    ...(await reflowChecks(page, label)),
  ];
}

/** axe-core's violations of the WCAG 2.0/2.1 A and AA rules on the page as it stands. */
async function axeViolations(page: Page, label: string): Promise<Violation[]> {
  if (!(await page.evaluate(() => 'axe' in window))) await page.evaluate(AXE_SOURCE);
  const found = await page.evaluate(async (tags: string[]) => {
    const axe = (window as unknown as { axe: { run: (...args: unknown[]) => Promise<AxeResults> } }).axe;
    interface AxeResults {
      violations: { id: string; impact: string | null; help: string; nodes: { target: unknown[] }[] }[];
    }
    const results = await axe.run(document, {
      runOnly: { type: 'tag', values: tags },
      resultTypes: ['violations'],
    });
    return results.violations.map((violation) => ({
      rule: violation.id,
      impact: violation.impact ?? 'unknown',
      help: violation.help,
      targets: violation.nodes.map((node) => node.target.map(String).join(' ')),
    }));
  }, WCAG_TAGS);
  return found.map((violation) => ({ page: label, ...violation }));
}

/** The pages whose narrow and enlarged views are saved as screenshots, for a person to look at. */
const SCREENSHOT_PAGES =
  /^(analyst \/studies\/\d+|analyst \/analyses\/\d+|analyst \/app\/reports\/\d+|analyst \/uploads\/\d+\/map( \(imported\))?|reviewer \/audit|admin \/admin\/people|admin \/admin\/templates\/\d+\/edit|admin \/admin\/outbox|analyst \/temperature-logs)$/;

/**
 * Reflow (WCAG 1.4.10) and resize text (1.4.4), as issue 17 tests them: at a 320 CSS px wide
 * viewport, and at 640 px with the root font size at 200 % (what 200 % text at 1280 px lays out
 * like, since every size is in rem), the page must not scroll sideways —
 * `documentElement.scrollWidth` at most `clientWidth` (+1 for rounding). A wide table may
 * scroll inside its own focusable region; that does not widen the page. The offending elements
 * named are those that stick out of the viewport while their parent does not (the first 8).
 * Closed `<details>` are opened for the measurement. The page is put back as it was (viewport,
 * font size, details) afterwards.
 */
async function reflowChecks(page: Page, label: string): Promise<Violation[]> {
  const viewport = page.viewport() ?? { width: 1280, height: 900 };
  const problems: Violation[] = [];
  const layouts = [
    {
      rule: 'reflow-320px',
      shot: 'reflow-320px',
      width: 320,
      fontSize: '',
      help: 'No sideways scrolling at 320 CSS px',
    },
    {
      rule: 'resize-text-200%',
      shot: 'text-200pc-640px',
      width: 640,
      fontSize: '200%',
      help: 'No sideways scrolling with 200 % text (640 px, root font size 200 %)',
    },
  ];
  for (const layout of layouts) {
    await page.setViewport({ ...viewport, width: layout.width });
    const overflow = await page.evaluate(async (fontSize: string) => {
      document.documentElement.style.fontSize = fontSize;
      // What a closed <details> holds is measured too (the analysis page's series).
      for (const details of document.querySelectorAll('details:not([open])')) {
        details.setAttribute('data-reflow-opened', '');
        (details as HTMLDetailsElement).open = true;
      }
      // Two frames and a moment for islands that lay out on resize (the figures).
      await new Promise((resolve) => requestAnimationFrame(() => requestAnimationFrame(resolve)));
      await new Promise((resolve) => setTimeout(resolve, 150));
      const root = document.documentElement;
      const limit = root.clientWidth + 1;
      const name = (element: Element) => {
        const id = element.id ? `#${element.id}` : '';
        const classes = [...element.classList]
          .slice(0, 3)
          .map((name) => `.${name}`)
          .join('');
        const text = (element.textContent ?? '').trim().replace(/\s+/g, ' ').slice(0, 40);
        return `${element.tagName.toLowerCase()}${id}${classes} (right ${Math.round(element.getBoundingClientRect().right)} px) "${text}"`;
      };
      const sticksOut = (element: Element) => element.getBoundingClientRect().right > limit;
      // Inside a region that scrolls (or clips) sideways of its own: the page does not widen.
      // An absolutely placed element (an sr-only text) is clipped only from its containing
      // block (the nearest positioned ancestor) upwards; a fixed one by none.
      const scrollsWithin = (element: Element) => {
        const position = getComputedStyle(element).position;
        if (position === 'fixed') return false;
        let up = element.parentElement;
        if (position === 'absolute')
          while (up && up !== document.body && getComputedStyle(up).position === 'static')
            up = up.parentElement;
        for (; up && up !== document.body; up = up.parentElement)
          if (getComputedStyle(up).overflowX !== 'visible') return true;
        return false;
      };
      const culprits: string[] = [];
      if (root.scrollWidth > limit)
        for (const element of document.body.querySelectorAll('*')) {
          if (element.getClientRects().length === 0 || !sticksOut(element) || scrollsWithin(element))
            continue;
          const parent = element.parentElement;
          if (parent && parent !== document.body && sticksOut(parent)) continue;
          culprits.push(name(element));
          if (culprits.length === 8) break;
        }
      // Text running out of a box that itself fits (an unbroken string): named by its element.
      if (root.scrollWidth > limit && culprits.length === 0) {
        const texts = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
        const range = document.createRange();
        for (let text = texts.nextNode(); text && culprits.length < 8; text = texts.nextNode()) {
          const parent = text.parentElement;
          if (!parent || !text.textContent?.trim()) continue;
          if (getComputedStyle(parent).overflowX !== 'visible' || scrollsWithin(parent)) continue;
          range.selectNodeContents(text);
          if (range.getBoundingClientRect().right > limit) culprits.push(`text in ${name(parent)}`);
        }
      }
      return { scrollWidth: root.scrollWidth, clientWidth: root.clientWidth, culprits };
    }, layout.fontSize);
    if (SCREENSHOT_PAGES.test(label)) {
      // The top of the page, at most 5000 px of it (a long page is too large to capture whole).
      const height = await page.evaluate(() => Math.min(document.documentElement.scrollHeight, 5_000));
      await page.screenshot({
        path: path.join(SCREENSHOT_DIR, `${layout.shot}-${label.replace(/[^A-Za-z0-9]+/g, '-')}.png`),
        clip: { x: 0, y: 0, width: layout.width, height },
        captureBeyondViewport: true,
      });
    }
    await page.evaluate(() => {
      document.documentElement.style.fontSize = '';
      for (const details of document.querySelectorAll<HTMLDetailsElement>('details[data-reflow-opened]')) {
        details.open = false;
        details.removeAttribute('data-reflow-opened');
      }
    });
    if (overflow.scrollWidth > overflow.clientWidth + 1)
      problems.push({
        page: label,
        rule: layout.rule,
        impact: 'serious',
        help: `${layout.help}: scrollWidth ${overflow.scrollWidth} > clientWidth ${overflow.clientWidth}`,
        targets: overflow.culprits,
      });
  }
  await page.setViewport(viewport);
  return problems;
}

/**
 * What axe cannot judge but issue 17 asks of every page, reported like its violations:
 * - the first focusable element is "Skip to main content", leading to the main landmark (2.4.1);
 * - the page has a title of its own, "<page name> · Rateledger" (2.4.2);
 * - every text field, select and textarea shows an outline of at least 2 px when focused (2.4.7).
 */
async function keyboardChecks(page: Page, label: string): Promise<Violation[]> {
  const found = await page.evaluate(() => {
    const problems: { rule: string; help: string; targets: string[] }[] = [];
    const focusable = document.querySelector<HTMLElement>(
      'a[href], button:not([disabled]), input:not([type="hidden"]):not([disabled]), select, textarea, [tabindex]:not([tabindex="-1"])',
    );
    const main = document.querySelector('main');
    if (
      focusable?.textContent?.trim() !== 'Skip to main content' ||
      focusable.getAttribute('href') !== `#${main?.id ?? '(no main)'}`
    )
      problems.push({
        rule: 'skip-link',
        help: 'The first focusable element must be "Skip to main content", to the main landmark',
        targets: [focusable?.outerHTML.slice(0, 120) ?? '(nothing focusable)'],
      });
    const title = document.title;
    if (!/^\S.* · Rateledger$/.test(title) || title === 'Rateledger · Rateledger')
      problems.push({ rule: 'page-title', help: 'The page must name itself', targets: [title] });
    const weak: string[] = [];
    // Each field is focused in turn; focus goes back where the page put it afterwards.
    const focusedBefore = document.activeElement as HTMLElement | null;
    const fields = document.querySelectorAll<HTMLElement>(
      'input:not([type="hidden"]):not([type="checkbox"]):not([type="radio"]):not([type="file"]):not([disabled]), select:not([disabled]), textarea:not([disabled])',
    );
    for (const field of fields) {
      if (field.getClientRects().length === 0) continue;
      field.focus();
      const style = getComputedStyle(field);
      if (style.outlineStyle === 'none' || Number.parseFloat(style.outlineWidth) < 2)
        weak.push(
          `${field.tagName.toLowerCase()}#${field.id || field.getAttribute('name')}: ${style.outlineWidth} ${style.outlineStyle}`,
        );
      field.blur();
    }
    focusedBefore?.focus();
    if (weak.length > 0)
      problems.push({
        rule: 'focus-indicator',
        help: 'A focused field needs an outline of at least 2 px',
        targets: weak,
      });
    return problems;
  });
  return found.map((problem) => ({ page: label, impact: 'serious', ...problem }));
}

/** Waits until the islands have mounted and their requests have settled. */
async function settle(page: Page) {
  await page.waitForNetworkIdle({ idleTime: 250, timeout: 5_000 }).catch(() => undefined);
  await page.evaluate(
    () =>
      new Promise<void>((resolve) => {
        const started = Date.now();
        const check = () => {
          const busy = document.querySelector('[aria-busy="true"], [data-state="loading"]');
          if (!busy || Date.now() - started > 5_000) resolve();
          else setTimeout(check, 100);
        };
        check();
      }),
  );
}

async function visit(page: Page, address: string): Promise<void> {
  const response = await page.goto(`${server.url}${address}`, { waitUntil: 'load' });
  if (address !== '/no-such-page') expect(response?.status(), address).toBeLessThan(400);
  await settle(page);
}

/** The first link on the page whose address matches `pattern`. */
async function firstLink(page: Page, pattern: RegExp): Promise<string> {
  const hrefs = await page.$$eval('a[href]', (links) => links.map((link) => link.getAttribute('href') ?? ''));
  const href = hrefs.find((candidate) => pattern.test(candidate));
  if (!href) throw new Error(`no link matching ${pattern} on ${page.url()}`);
  return href.replace(/^https?:\/\/[^/]+/, '');
}

async function signedInPage(role: Role): Promise<{ context: TestContext; page: Page }> {
  const context = await TestContext.open(browser, { viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  const ui = locate(page);
  await page.goto(`${server.url}/signin`);
  await ui.getByLabel('E-mail address').fill(world.users[role]!.email);
  await ui.getByLabel('Password').fill(world.users[role]!.password);
  await ui.getByRole('button', { name: 'Sign in' }).click();
  await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();
  await settle(page);
  return { context, page };
}

/**
 * Opens each address in a tab of its own (in the role's browser context) and audits it. A fresh
 * tab per page, because the PDF viewer of the review page leaves a request open for good and a
 * tab that showed it never looks idle again.
 */
async function auditPages(page: Page, who: string, addresses: string[]): Promise<Violation[]> {
  const violations: Violation[] = [];
  for (const address of addresses) {
    const tab = await page.browserContext().newPage();
    await tab.setViewport(page.viewport() ?? { width: 1280, height: 900 });
    await visit(tab, address);
    violations.push(...(await audit(tab, `${who} ${address}`)));
    await tab.close();
  }
  return violations;
}

/** Fails listing page, rule, impact and the selectors of every element in violation. */
function expectNoViolations(violations: Violation[]) {
  expect(violations.length === 0 ? '' : `\n${describeViolations(violations)}`).toBe('');
}

function describeViolations(violations: Violation[]): string {
  return violations
    .map(
      (violation) =>
        `${violation.page}: ${violation.rule} (${violation.impact}) ${violation.help}\n    ${violation.targets.join('\n    ')}`,
    )
    .join('\n');
}

describe('WCAG 2.1 A and AA rules of axe-core on every page, as the role that uses it', () => {
  it('the checks catch planted problems (so a clean run means something)', async () => {
    const context = await TestContext.open(browser);
    const page = await context.newPage();
    await page.setContent(
      `<!doctype html><html lang="en"><head><title>Rateledger · Rateledger</title></head><body>
        <a href="/">Home</a><main id="main"><h1>Planted</h1>
        <ul role="tabpanel"><li>an item outside a list</li></ul>
        <label for="field">Field</label><input id="field" type="text">
        <p id="wide" style="width: 700px">A paragraph 700 px wide</p></main></body></html>`,
    );
    const found = await audit(page, 'planted');
    expect(found.map((violation) => violation.rule).sort()).toEqual(
      ['focus-indicator', 'listitem', 'page-title', 'reflow-320px', 'resize-text-200%', 'skip-link'].sort(),
    );
    expect(found.find((violation) => violation.rule === 'reflow-320px')?.targets).toEqual([
      'p#wide (right 708 px) "A paragraph 700 px wide"',
    ]);
    expect(found.find((violation) => violation.rule === 'listitem')?.targets).toEqual(['li']);
    // An unbroken hash in a box that fits is named by its text; the same table in its own
    // scrolling region is not a problem.
    await page.setContent(
      `<!doctype html><html lang="en"><head><title>Planted · Rateledger</title></head><body><main>
        <p id="hash" style="width: 200px">${'0123456789abcdef'.repeat(4)}</p>
        <div class="scroller" style="overflow-x: auto"><table><tr><td style="width: 900px">wide</td></tr></table></div>
        </main></body></html>`,
    );
    const hash = await reflowChecks(page, 'planted hash');
    expect(hash.map((violation) => [violation.rule, violation.targets])).toEqual([
      ['reflow-320px', [`text in p#hash (right 208 px) "${'0123456789abcdef'.repeat(4).slice(0, 40)}"`]],
      ['resize-text-200%', [`text in p#hash (right 208 px) "${'0123456789abcdef'.repeat(4).slice(0, 40)}"`]],
    ]);
    await page.setContent(
      `<!doctype html><html lang="en"><head><title>Planted · Rateledger</title></head><body><main>
        <p id="hash" style="width: 200px; word-break: break-all">${'0123456789abcdef'.repeat(4)}</p>
        <div class="scroller" style="overflow-x: auto"><table><tr><td style="width: 900px">wide</td></tr></table></div>
        </main></body></html>`,
    );
    expect(await reflowChecks(page, 'planted, fixed')).toEqual([]);
    await context.close();
  });

  it('one Tab reaches "Skip to main content", shown on focus; Enter moves focus to the main content', async () => {
    const { context, page } = await signedInPage('analyst');
    for (const address of ['/studies', '/app/reports']) {
      await visit(page, address);
      await page.keyboard.press('Tab');
      const focused = await page.evaluate(() => {
        const element = document.activeElement as HTMLElement;
        const box = element.getBoundingClientRect();
        return { text: element.textContent, top: box.top, height: box.height };
      });
      expect(focused.text, address).toBe('Skip to main content');
      expect(focused.top, address).toBeGreaterThanOrEqual(0);
      expect(focused.height, address).toBeGreaterThan(10);
      await page.screenshot({
        path: path.join(SCREENSHOT_DIR, `accessibility-skip-link${address.replaceAll('/', '-')}.png`),
      });
      await page.keyboard.press('Enter');
      expect(await page.evaluate(() => document.activeElement?.tagName), address).toBe('MAIN');
      // The next Tab goes on from the main content, past the header and its menu.
      await page.keyboard.press('Tab');
      expect(await page.evaluate(() => Boolean(document.activeElement?.closest('main'))), address).toBe(true);
    }
    await context.close();
  });

  it('an anonymous visitor: sign-in, check a PDF, the error page, an invitation, a password reset', async () => {
    const all: Violation[] = [];
    const context = await TestContext.open(browser, { viewport: { width: 1280, height: 900 } });
    const page = await context.newPage();
    all.push(
      ...(await auditPages(page, 'anonymous', [
        '/signin',
        '/check-a-pdf',
        '/no-such-page',
        links.invitation,
        links.passwordReset,
      ])),
    );
    // The invitation and password forms sent empty show their field errors.
    for (const address of [links.invitation, links.passwordReset]) {
      await visit(page, address);
      await Promise.all([page.waitForNavigation(), page.click('main form button[type="submit"]')]);
      await settle(page);
      all.push(...(await audit(page, `anonymous ${address} (refused)`)));
    }
    // A refused sign-in shows its message.
    const ui = locate(page);
    await visit(page, '/signin');
    await ui.getByLabel('E-mail address').fill('nobody@test.example');
    await ui.getByLabel('Password').fill('not the password');
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForNavigation().catch(() => undefined);
    await settle(page);
    all.push(...(await audit(page, 'anonymous /signin (refused)')));
    await context.close();
    expectNoViolations(all);
  }, 300_000);

  it('the analyst: dashboard, studies, a study, mapping and import, analysis, reports, review, inbox, temperature logs, verify', async () => {
    const all: Violation[] = [];
    const { context, page } = await signedInPage('analyst');
    const ui = locate(page);
    all.push(
      ...(await auditPages(page, 'analyst', [
        '/',
        '/studies',
        '/studies/new',
        `/studies/${ids.studyId}`,
        `/studies/${ids.studyId}/edit`,
        `/analyses/${ids.runId}`,
        `/analyses/${ids.multiRunId}`,
        `/retire/analysis/${ids.runId}`,
        '/app/activity',
        '/app/reports',
        `/app/reports/${ids.reportId}`,
        `/app/reports/${ids.draftReportId}`,
        '/review',
        `/review/reports/${ids.draftReportId}/versions/1`,
        '/inbox',
        '/temperature-logs',
        '/temperature-logs/new',
        '/verify',
        links.verify,
        '/verify?report=RL-1999-0001',
      ])),
    );
    // The study form refused: its error summary and field errors.
    await visit(page, '/studies/new');
    await ui.getByRole('button', { name: 'Create study' }).click();
    await page.waitForNavigation().catch(() => undefined);
    await settle(page);
    all.push(...(await audit(page, 'analyst /studies/new (refused)')));
    // The mapping workbench, then its import summary.
    await visit(page, `/uploads/${ids.uploadId}/map`);
    await ui.getByLabel('Time column').waitFor();
    all.push(...(await audit(page, `analyst /uploads/${ids.uploadId}/map`)));
    await chooseColumn(page, 'Time column', 'Month');
    await ui.getByLabel('Unit of time').selectOption('month');
    await chooseColumn(page, 'Value column', 'Assay');
    await ui.getByLabel('Unit of the values').fill('% of label claim');
    await chooseColumn(page, 'Batch column (optional)', 'Batch');
    await chooseColumn(page, 'Temperature column (optional)', 'Temperature');
    await ui.getByRole('button', { name: 'Import as dataset' }).click();
    await ui.getByRole('button', { name: 'Run the analysis' }).waitFor();
    await settle(page);
    all.push(...(await audit(page, `analyst /uploads/${ids.uploadId}/map (imported)`)));
    // The summary replaced the workbench: focus is on its heading, and the live region says so.
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('import-summary');
    await expect
      .poll(() =>
        page.evaluate(
          () =>
            document.querySelector('#import-summary')?.parentElement?.querySelector('[role="status"]')
              ?.textContent,
        ),
      )
      .toMatch(/^Dataset #\d+ stored: \d+ points in \d+ series\./);
    await context.close();
    expectNoViolations(all);
  }, 300_000);

  it('the reviewer: review queue, a version with the sign form (and refused), audit trail, an event, the chain', async () => {
    const all: Violation[] = [];
    const { context, page } = await signedInPage('reviewer');
    const ui = locate(page);
    all.push(
      ...(await auditPages(page, 'reviewer', [
        '/',
        '/review',
        `/review/reports/${ids.reportId}/versions/1`,
        '/audit',
        '/audit/chain',
        '/studies',
        `/analyses/${ids.runId}`,
        `/app/reports/${ids.reportId}`,
        '/inbox',
      ])),
    );
    await visit(page, '/audit');
    all.push(...(await auditPages(page, 'reviewer', [await firstLink(page, /\/audit\/events\/\d+/)])));
    // The sign form sent empty.
    await visit(page, `/review/reports/${ids.reportId}/versions/1`);
    await Promise.all([
      page.waitForNavigation(),
      ui.getByRole('button', { name: 'Sign', exact: true }).click(),
    ]);
    await settle(page);
    all.push(...(await audit(page, `reviewer /review/reports/${ids.reportId}/versions/1 (sign refused)`)));
    // Focus is on the error summary; its first link takes focus to the field it names.
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('sign-error-summary');
    await ui.locator('#sign-error-summary a').first().click();
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('sign-meaning');
    await context.close();
    expectNoViolations(all);
  }, 300_000);

  it('the administrator: people, invite (and refused), a person, settings, checklist, templates, the editor, outbox, a mail', async () => {
    const all: Violation[] = [];
    const { context, page } = await signedInPage('admin');
    const ui = locate(page);
    all.push(
      ...(await auditPages(page, 'admin', [
        '/',
        '/admin/people',
        '/admin/people/invite',
        `/admin/people/${world.users.analyst!.id}`,
        '/admin/settings',
        '/admin/review-checklist',
        '/admin/templates',
        '/admin/outbox',
        '/audit',
      ])),
    );
    await visit(page, '/admin/templates');
    const editor = await firstLink(page, /\/admin\/templates\/\d+\/edit/);
    await visit(page, editor);
    await ui.locator('.cm-content').waitFor();
    await settle(page);
    all.push(...(await audit(page, `admin ${editor}`)));
    await visit(page, '/admin/outbox');
    all.push(...(await auditPages(page, 'admin', [await firstLink(page, /\/admin\/outbox\/\d+/)])));
    await visit(page, '/admin/people/invite');
    await Promise.all([page.waitForNavigation(), ui.getByRole('button', { name: /invitation/i }).click()]);
    await settle(page);
    all.push(...(await audit(page, 'admin /admin/people/invite (refused)')));
    await context.close();
    expectNoViolations(all);
  }, 300_000);
});

describe('the warning before the idle sign-out (WCAG 2.2.1)', () => {
  it('opens before the sign-out, passes the audit, and "Stay signed in" extends the session without losing the form', async () => {
    const { context, page } = await signedInPage('analyst');
    // The page's clock can be moved forward (the server's is left alone): Date.now() plus an
    // offset, set before any script of the page runs.
    await page.evaluateOnNewDocument(() => {
      const realNow = Date.now.bind(Date);
      let offset = 0;
      Date.now = () => realNow() + offset;
      (window as unknown as { skipClock: (ms: number) => void }).skipClock = (ms) => {
        offset += ms;
      };
    });
    await visit(page, '/studies/new');
    await page.focus('#study-product');
    await page.keyboard.type('Half-typed product name');
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('study-product');
    const timing = await page.$eval('#session-timeout', (dialog) => ({
      signOutInMs: Number((dialog as HTMLElement).dataset.signOutInMs),
      warnBeforeMs: Number((dialog as HTMLElement).dataset.warnBeforeMs),
    }));
    expect(timing).toEqual({ signOutInMs: 29 * 60_000, warnBeforeMs: 2 * 60_000 });
    expect(await page.$eval('#session-timeout', (dialog) => (dialog as HTMLDialogElement).open)).toBe(false);

    await page.evaluate(
      (ms: number) => (window as unknown as { skipClock: (ms: number) => void }).skipClock(ms),
      timing.signOutInMs - timing.warnBeforeMs + 1_000,
    );
    await page.waitForFunction(() => document.querySelector<HTMLDialogElement>('#session-timeout')?.open, {
      timeout: 5_000,
    });
    const ui = locate(page);
    await ui
      .getByRole('dialog', { name: /You will be signed out in (2 minutes|1 minute|\d+ seconds)/ })
      .waitFor();
    expect(await page.evaluate(() => document.activeElement?.textContent)).toBe('Stay signed in');
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'accessibility-session-warning.png') });
    // axe and reflow; not the field-focus checks, which cannot focus the fields a modal dialog
    // makes inert.
    const label = 'analyst /studies/new (sign-out warning)';
    expectNoViolations([...(await axeViolations(page, label)), ...(await reflowChecks(page, label))]);

    // Enter on the focused button: the session is extended, the dialog closes, focus and the
    // typed text are back.
    const [answer] = await Promise.all([
      page.waitForResponse((response) => response.url().endsWith('/api/session/extend')),
      page.keyboard.press('Enter'),
    ]);
    expect(answer.status()).toBe(200);
    expect(await answer.json()).toEqual({ signOutInMs: 30 * 60_000 });
    await page.waitForFunction(() => !document.querySelector<HTMLDialogElement>('#session-timeout')?.open);
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('study-product');
    expect(await page.$eval('#study-product', (input) => (input as HTMLInputElement).value)).toBe(
      'Half-typed product name',
    );
    await context.close();
  });
});

/** Chooses the option of a labelled select whose text contains `text` (the header of a column). */
async function chooseColumn(page: Page, label: string, text: string) {
  const select = locate(page).getByLabel(label);
  const option = select.locator('option', { hasText: text }).first();
  await select.selectOption((await option.getAttribute('value'))!);
}
