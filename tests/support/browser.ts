import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { Express } from 'express';
import puppeteer, {
  type Browser,
  type BrowserContext,
  type CDPSession,
  type Page,
  type Viewport,
} from 'puppeteer-core';
import { CHROMIUM_ARGS } from '../../server/features/reports/pdf/browser-pool.ts';

/** Screenshots land in reports/screenshots (git-ignored) so a person can open them after a run. */
export const SCREENSHOT_DIR = path.resolve(import.meta.dirname, '../../reports/screenshots');

const DEFAULT_VIEWPORT: Viewport = { width: 1280, height: 720 };
// The report printer's flags, less the two that cut Chromium off from every host: the tests'
// browser must reach the app on loopback.
const TEST_ARGS = CHROMIUM_ARGS.filter(
  (flag) => !flag.startsWith('--host-resolver-rules=') && !flag.startsWith('--proxy-'),
);

/**
 * Debian's Chromium through puppeteer-core, with the report printer's flags (root, no GPU, no
 * background traffic) and a fresh profile that is removed when the browser exits.
 */
export async function launchChromium(): Promise<Browser> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const profileDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-test-chromium-'));
  const browser = await puppeteer.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    pipe: true,
    userDataDir: profileDir,
    args: TEST_ARGS,
    defaultViewport: DEFAULT_VIEWPORT,
  });
  browser.process()?.once('exit', () => rmSync(profileDir, { recursive: true, force: true }));
  return browser;
}

/**
 * A browser context of its own (cookies, storage, downloads): one per person in a test. With
 * `acceptDownloads`, files a page downloads are saved in a temporary folder removed on `close()`.
 */
export class TestContext {
  private constructor(
    readonly context: BrowserContext,
    private readonly viewport: Viewport,
    private readonly downloads: { session: CDPSession; folder: string } | null,
  ) {}

  static async open(
    browser: Browser,
    options: { viewport?: Viewport; acceptDownloads?: boolean } = {},
  ): Promise<TestContext> {
    const context = await browser.createBrowserContext();
    let downloads: { session: CDPSession; folder: string } | null = null;
    if (options.acceptDownloads) {
      const folder = mkdtempSync(path.join(os.tmpdir(), 'rateledger-test-downloads-'));
      const session = await browser.target().createCDPSession();
      await session.send('Browser.setDownloadBehavior', {
        behavior: 'allowAndName',
        downloadPath: folder,
        browserContextId: context.id,
        eventsEnabled: true,
      });
      downloads = { session, folder };
    }
    return new TestContext(context, options.viewport ?? DEFAULT_VIEWPORT, downloads);
  }

  async newPage(): Promise<Page> {
    const page = await this.context.newPage();
    await page.setViewport(this.viewport);
    return page;
  }

  /** Runs `trigger` and resolves with the file it downloaded, once Chromium has written all of it. */
  async waitForDownload(
    trigger: () => Promise<unknown>,
  ): Promise<{ suggestedFilename: string; path: string }> {
    const downloads = this.downloads;
    if (!downloads) throw new Error('This context was opened without acceptDownloads.');
    const { session, folder } = downloads;
    let started: (value: { guid: string; suggestedFilename: string }) => void = () => undefined;
    const begun = new Promise<{ guid: string; suggestedFilename: string }>((resolve) => {
      started = resolve;
    });
    const finished = new Map<string, (state: string) => void>();
    const states = new Map<string, string>();
    const onBegin = (event: { guid: string; suggestedFilename: string }) => started(event);
    const onProgress = (event: { guid: string; state: string }) => {
      if (event.state === 'inProgress') return;
      states.set(event.guid, event.state);
      finished.get(event.guid)?.(event.state);
    };
    session.on('Browser.downloadWillBegin', onBegin);
    session.on('Browser.downloadProgress', onProgress);
    try {
      await trigger();
      const { guid, suggestedFilename } = await begun;
      const state = states.get(guid) ?? (await new Promise<string>((resolve) => finished.set(guid, resolve)));
      if (state !== 'completed') throw new Error(`The download of ${suggestedFilename} was ${state}.`);
      return { suggestedFilename, path: path.join(folder, guid) };
    } finally {
      session.off('Browser.downloadWillBegin', onBegin);
      session.off('Browser.downloadProgress', onProgress);
    }
  }

  async close(): Promise<void> {
    await this.downloads?.session.detach().catch(() => undefined);
    await this.context.close();
    if (this.downloads) rmSync(this.downloads.folder, { recursive: true, force: true });
  }
}

/** A page in a context of its own, closed with it, like a fresh browser window. */
export async function newPage(browser: Browser, options: { viewport?: Viewport } = {}): Promise<Page> {
  const context = await TestContext.open(browser, options);
  const page = await context.newPage();
  page.once('close', () => void context.close().catch(() => undefined));
  return page;
}

/** Runs `trigger` and resolves with the tab it opened, once that tab has loaded. */
export async function waitForPopup(page: Page, trigger: () => Promise<unknown>): Promise<Page> {
  const opened = new Promise<Page | null>((resolve) => page.once('popup', resolve));
  await trigger();
  const popup = await opened;
  if (!popup) throw new Error('The page opened no tab.');
  await waitUntil(
    async () =>
      popup.url() !== 'about:blank' &&
      (await popup.evaluate(() => document.readyState).catch(() => 'loading')) === 'complete',
    'the new tab to load',
  );
  return popup;
}

/** Resolves once the page's address matches `pattern` and that document has loaded. */
export async function waitForUrl(page: Page, pattern: RegExp, options: { timeout?: number } = {}) {
  await waitUntil(
    async () =>
      pattern.test(page.url()) &&
      (await page.evaluate(() => document.readyState).catch(() => 'loading')) === 'complete',
    `an address matching ${pattern} (at ${page.url()})`,
    options.timeout,
  );
}

async function waitUntil(check: () => Promise<boolean>, what: string, timeout = 30_000) {
  const deadline = Date.now() + timeout;
  while (!(await check())) {
    if (Date.now() > deadline) throw new Error(`Timed out waiting for ${what}.`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

/** Presses a shortcut written as `Control+a`: the modifiers held while the last key is pressed. */
export async function pressShortcut(page: Page, shortcut: string): Promise<void> {
  const keys = shortcut.split('+') as Parameters<Page['keyboard']['press']>[0][];
  const key = keys.pop()!;
  for (const modifier of keys) await page.keyboard.down(modifier);
  await page.keyboard.press(key);
  for (const modifier of keys.reverse()) await page.keyboard.up(modifier);
}

/** Serves the app on an ephemeral loopback port. */
export async function serve(app: Express): Promise<{ url: string; close(): Promise<void> }> {
  const server: Server = await new Promise((resolve) => {
    const listening = app.listen(0, '127.0.0.1', () => resolve(listening));
  });
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}`,
    close: () => new Promise((resolve) => server.close(() => resolve())),
  };
}
