import { fileURLToPath } from 'node:url';
import { and, asc, eq, notExists } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { type Database, openDatabase } from '../platform/db/client.ts';
import { analysisRuns, organisations, temperatureLogAssessments } from '../platform/db/schema/index.ts';
import { DEMO_ACCOUNTS, DEMO_ORGANISATION } from './demo-accounts.ts';

/**
 * The demo people's first work, done the way they would do it — through the product's own web
 * pages and API, with their own sign-ins — once the server is up, so that each demo role finds
 * real work on first sign-in: the analyst makes two reports of the demo study's current analysis
 * — the stability report, and an excursion assessment with the demo temperature log attached —
 * and submits both to the reviewer; the reviewer signs the first. The second stays waiting in the
 * reviewer's queue.
 *
 * Runs once: when the demo organisation already holds a report, it does nothing. Every step is
 * an ordinary request (CSRF token, session cookie, the same forms a browser posts), so the audit
 * trail records it as the demo people's own actions.
 */

const RENDER_WAIT_MS = 180_000;

/** A minimal cookie-keeping client for the product's forms. */
class DemoBrowser {
  private readonly cookies = new Map<string, string>();
  constructor(private readonly baseUrl: string) {}

  async request(path: string, init: RequestInit = {}): Promise<Response> {
    const headers = new Headers(init.headers);
    if (this.cookies.size > 0)
      headers.set('cookie', [...this.cookies].map(([name, value]) => `${name}=${value}`).join('; '));
    const response = await fetch(new URL(path, this.baseUrl), { ...init, headers, redirect: 'manual' });
    for (const cookie of response.headers.getSetCookie()) {
      const [pair] = cookie.split(';');
      const at = pair!.indexOf('=');
      this.cookies.set(pair!.slice(0, at).trim(), pair!.slice(at + 1).trim());
    }
    return response;
  }

  async page(path: string): Promise<string> {
    const response = await this.request(path);
    if (response.status !== 200) throw new Error(`GET ${path} answered ${response.status}`);
    return response.text();
  }

  /** Posts a form as a browser does; answers with the redirect target (303) or fails with the page. */
  async postForm(path: string, fields: [string, string][]): Promise<string> {
    const response = await this.request(path, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams(fields).toString(),
    });
    if (response.status !== 303 && response.status !== 302) {
      const text = await response.text();
      throw new Error(`POST ${path} answered ${response.status}: ${plainText(text).slice(0, 400)}`);
    }
    return response.headers.get('location') ?? '';
  }

  async json<T>(path: string): Promise<T> {
    const response = await this.request(path, { headers: { accept: 'application/json' } });
    if (response.status !== 200) throw new Error(`GET ${path} answered ${response.status}`);
    return (await response.json()) as T;
  }
}

function plainText(html: string): string {
  return html
    .replace(/<script[\s\S]*?<\/script>/g, ' ')
    .replace(/<[^>]+>/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
}

/** The value of a hidden input of a page's form, by name. */
function hiddenField(html: string, name: string): string {
  const match = new RegExp(`name="${name}" value="([^"]*)"`).exec(html);
  if (!match) throw new Error(`the page has no field "${name}"`);
  return match[1]!.replaceAll('&amp;', '&').replaceAll('&#x3D;', '=').replaceAll('&quot;', '"');
}

async function signIn(baseUrl: string, email: string, password: string): Promise<DemoBrowser> {
  const browser = new DemoBrowser(baseUrl);
  const form = await browser.page('/signin');
  const target = await browser.postForm('/signin', [
    ['_csrf', hiddenField(form, '_csrf')],
    ['next', ''],
    ['email', email],
    ['password', password],
  ]);
  if (target.startsWith('/signin')) throw new Error(`the demo account ${email} could not sign in`);
  return browser;
}

/** The session's CSRF token, as every signed-in page carries it. */
async function sessionToken(browser: DemoBrowser): Promise<string> {
  const html = await browser.page('/review');
  const match = /<meta name="csrf-token" content="([^"]+)"/.exec(html);
  if (!match) throw new Error('the page carries no CSRF token');
  return match[1]!;
}

interface ReportDetail {
  versions: { versionNumber: number; renderStatus: string; renderError?: string | null }[];
}

async function waitUntilRendered(browser: DemoBrowser, reportId: number): Promise<void> {
  const until = Date.now() + RENDER_WAIT_MS;
  for (;;) {
    const detail = await browser.json<ReportDetail>(`/api/reports/${reportId}`);
    const status = detail.versions[0]?.renderStatus;
    if (status === 'ready') return;
    if (status === 'failed') throw new Error(`report ${reportId} did not render`);
    if (Date.now() > until) throw new Error(`report ${reportId} was not rendered within 3 minutes`);
    await new Promise((resolve) => setTimeout(resolve, 1000));
  }
}

/** "Make a report" through the JSON API the report screen uses; waits for the rendered PDF. */
async function makeReport(
  browser: DemoBrowser,
  token: string,
  runId: number,
  request: { title?: string; temperatureLogIds?: number[] },
): Promise<number> {
  const response = await browser.request(`/api/analyses/${runId}/reports`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': token, accept: 'application/json' },
    body: JSON.stringify({ paperSize: 'a4', ...request }),
  });
  const location = response.headers.get('location') ?? '';
  const id = /\/reports\/(\d+)/.exec(location)?.[1];
  if (response.status !== 201 || !id)
    throw new Error(
      `making a report of analysis ${runId} answered ${response.status}: ${await response.text()}`,
    );
  await waitUntilRendered(browser, Number(id));
  return Number(id);
}

async function submitToReviewer(browser: DemoBrowser, reportId: number, reviewerEmail: string, note: string) {
  const path = `/review/reports/${reportId}/versions/1`;
  const html = await browser.page(path);
  const reviewer = new RegExp(
    `name="reviewerIds" value="(\\d+)"[^<]*<span[^>]*>\\(${reviewerEmail.replace('.', '\\.')}\\)`,
  ).exec(html)?.[1];
  if (!reviewer) throw new Error(`${reviewerEmail} is not offered as a reviewer of report ${reportId}`);
  await browser.postForm(`${path}/submit`, [
    ['_csrf', hiddenField(html, '_csrf')],
    ['reviewerIds', reviewer],
    ['note', note],
  ]);
}

async function signAsReviewer(
  browser: DemoBrowser,
  reportId: number,
  account: { email: string; password: string },
) {
  const path = `/review/reports/${reportId}/versions/1`;
  const html = await browser.page(path);
  const meaning = /<select id="sign-meaning" name="meaning"[^>]*>[\s\S]*?<option value="([^"]+)"/.exec(
    html,
  )?.[1];
  if (!meaning) throw new Error(`report ${reportId} offers no signature meaning`);
  const fields: [string, string][] = [
    ['_csrf', hiddenField(html, '_csrf')],
    ['reviewedSha256', hiddenField(html, 'reviewedSha256')],
    ['recordStamp', hiddenField(html, 'recordStamp')],
    ['meaning', meaning],
    ['comment', 'Demo: reviewed against the invented protocol SP-QT-02.'],
    ['identity', account.email],
    ['password', account.password],
  ];
  const checklist = /name="checklistVersionId" value="(\d*)"/.exec(html)?.[1];
  if (checklist) {
    fields.push(['checklistVersionId', checklist]);
    for (const match of html.matchAll(/name="checklistConfirmed" value="([^"]*)"/g))
      fields.push(['checklistConfirmed', match[1]!.replaceAll('&amp;', '&').replaceAll('&#x27;', "'")]);
  }
  await browser.postForm(`${path}/sign`, fields);
}

/** The demo study's current analyses (not superseded), oldest first. */
async function currentRuns(
  db: Database,
  organisationSlug: string,
): Promise<{ organisationId: number; runIds: number[]; temperatureLogIds: number[] } | null> {
  const [organisation] = await db
    .select({ id: organisations.id })
    .from(organisations)
    .where(eq(organisations.slug, organisationSlug));
  if (!organisation) return null;
  const newer = alias(analysisRuns, 'newer');
  const rows = await db
    .select({ id: analysisRuns.id })
    .from(analysisRuns)
    .where(
      and(
        eq(analysisRuns.organisationId, organisation.id),
        notExists(db.select({ id: newer.id }).from(newer).where(eq(newer.supersedesRunId, analysisRuns.id))),
      ),
    )
    .orderBy(asc(analysisRuns.id));
  const logs = await db
    .select({ id: temperatureLogAssessments.id })
    .from(temperatureLogAssessments)
    .where(eq(temperatureLogAssessments.organisationId, organisation.id))
    .orderBy(asc(temperatureLogAssessments.id));
  return {
    organisationId: organisation.id,
    runIds: rows.map((row) => row.id),
    temperatureLogIds: logs.map((log) => log.id),
  };
}

/** Waits for the server started beside this script to answer its health check (at most a minute). */
async function waitForServer(baseUrl: string): Promise<void> {
  const until = Date.now() + 60_000;
  for (;;) {
    const healthy = await fetch(new URL('/healthz', baseUrl)).then(
      (response) => response.ok,
      () => false,
    );
    if (healthy) return;
    if (Date.now() > until) throw new Error(`the server at ${baseUrl} did not answer within a minute`);
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
}

/** Whose work: the demo organisation and its analyst and reviewer, unless a test names others. */
export interface DemoActivityPeople {
  organisationSlug: string;
  analyst: { email: string; password: string };
  reviewer: { email: string; password: string };
}

const DEMO_PEOPLE: DemoActivityPeople = {
  organisationSlug: DEMO_ORGANISATION.slug,
  analyst: DEMO_ACCOUNTS.find((account) => account.roles.includes('analyst'))!,
  reviewer: DEMO_ACCOUNTS.find(
    (account) => account.roles.includes('reviewer') && !account.roles.includes('analyst'),
  )!,
};

/**
 * Does the demo people's first work against the server at `baseUrl`. Answers 'already-present'
 * when the organisation holds a report already (or has no analysis).
 */
export async function runDemoActivity(
  db: Database,
  baseUrl: string,
  people: DemoActivityPeople = DEMO_PEOPLE,
): Promise<'done' | 'already-present'> {
  const runs = await currentRuns(db, people.organisationSlug);
  if (!runs || runs.runIds.length === 0) return 'already-present';
  const analystAccount = people.analyst;
  const reviewerAccount = people.reviewer;
  const analyst = await signIn(baseUrl, analystAccount.email, analystAccount.password);
  const existing = await analyst.json<{ items: unknown[] }>('/api/reports');
  if (existing.items.length > 0) return 'already-present';
  const token = await sessionToken(analyst);
  // Both reports are of the study's current analysis: the stability report, and an excursion
  // assessment with the organisation's temperature log attached (when there is one).
  const latest = runs.runIds.at(-1)!;
  const signedReport = await makeReport(analyst, token, latest, {});
  await submitToReviewer(
    analyst,
    signedReport,
    reviewerAccount.email,
    'Demo: the registration stability report, for your review and signature.',
  );
  const waitingReport = await makeReport(analyst, token, latest, {
    title: 'Quillatrine 40 mg — excursion assessment of consignment QT-C-0907 (demo)',
    temperatureLogIds: runs.temperatureLogIds.slice(0, 1),
  });
  await submitToReviewer(
    analyst,
    waitingReport,
    reviewerAccount.email,
    'Demo: does the depot excursion matter? The temperature log is attached.',
  );
  const reviewer = await signIn(baseUrl, reviewerAccount.email, reviewerAccount.password);
  await signAsReviewer(reviewer, signedReport, reviewerAccount);
  return 'done';
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  const baseUrl = process.argv[2];
  if (!url || !baseUrl) {
    console.error('usage: DATABASE_URL=… demo-activity BASE_URL');
    process.exit(1);
  }
  const handle = openDatabase(url);
  try {
    await waitForServer(baseUrl);
    const outcome = await runDemoActivity(handle.db, baseUrl);
    console.log(
      outcome === 'done'
        ? '[rateledger] demo reports made: one signed, one waiting for review'
        : '[rateledger] demo reports already present',
    );
  } catch (error) {
    console.error(`[rateledger] the demo reports could not be made: ${(error as Error).message}`);
    process.exitCode = 1;
  } finally {
    await handle.close();
  }
}
