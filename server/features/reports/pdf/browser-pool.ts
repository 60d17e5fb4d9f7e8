import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import puppeteer, { type Browser } from 'puppeteer-core';

/**
 * A small pool of warm headless Chromium browsers for printing reports: launching Chromium takes
 * about half a second, so browsers are started once and reused; each render borrows one browser
 * (one render at a time per browser) and gives it back. `size` browsers print in parallel; more
 * callers wait in line.
 *
 * Each browser gets a fresh temporary profile directory, removed when the browser goes away.
 * A browser that dies (crash, killed process: the `disconnected` event) is dropped and a new one
 * is launched for the next render; a render in flight on it fails and its caller may retry.
 *
 * Network hardening on top of the per-page request blocking in `print-pdf.ts`: the DevTools
 * protocol runs over a pipe (no debugging port), background networking and component updates are
 * off, every host name resolves to nothing, and all traffic is pointed at a proxy on a closed
 * loopback port — so even a request that escaped interception could not leave the machine.
 *
 * Reference: puppeteer `launch` options (pptr.dev/api/puppeteer.launchoptions); Chromium
 * command-line switches (peter.sh/experiments/chromium-command-line-switches).
 *
 * Throws from `acquire` when Chromium cannot be launched (wrong `CHROMIUM_PATH`), and after
 * `close()`.
 *
 * Example: const pool = new BrowserPool({ size: 1 }); await pool.withBrowser((browser) =>
 * browser.version()) resolves to e.g. "Chrome/156.0…"; await pool.close().
 */

export const CHROMIUM_ARGS = [
  '--no-sandbox', // Chromium refuses to run as root with its sandbox; the page runs no script.
  '--disable-gpu',
  '--disable-dev-shm-usage',
  '--disable-quic',
  '--no-first-run',
  '--no-default-browser-check',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--disable-default-apps',
  '--disable-extensions',
  '--disable-domain-reliability',
  '--disable-client-side-phishing-detection',
  '--mute-audio',
  '--host-resolver-rules=MAP * ~NOTFOUND',
  '--proxy-server=http://127.0.0.1:9',
  '--proxy-bypass-list=<-loopback>',
] as const;

export interface BrowserPoolOptions {
  /** Browsers kept warm and printing in parallel (default 1). */
  size?: number;
  executablePath?: string;
  /** Renders after which a browser is replaced, to bound memory growth (default 500). */
  maxRendersPerBrowser?: number;
}

interface Slot {
  browser: Browser;
  profileDir: string;
  renders: number;
  busy: boolean;
  alive: boolean;
}

/** Removes a browser's profile once its process has exited (it writes there until then). */
function removeProfileWhenGone(slot: Slot): void {
  const remove = () => {
    try {
      rmSync(slot.profileDir, { recursive: true, force: true, maxRetries: 5, retryDelay: 50 });
    } catch {
      // A leftover temp folder is harmless; the OS cleans the temp directory.
    }
  };
  const child = slot.browser.process();
  if (child && child.exitCode === null && child.signalCode === null) child.once('exit', remove);
  else remove();
}

export class BrowserPool {
  readonly size: number;
  private readonly executablePath: string;
  private readonly maxRenders: number;
  private readonly slots: Slot[] = [];
  private launching = 0;
  private readonly waiting: { resolve: (slot: Slot) => void; reject: (error: Error) => void }[] = [];
  private closed = false;
  /** Browsers that died and were replaced, for health reporting and tests. */
  restarts = 0;

  constructor(options: BrowserPoolOptions = {}) {
    this.size = Math.max(1, Math.floor(options.size ?? 1));
    this.executablePath = options.executablePath ?? process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
    this.maxRenders = options.maxRendersPerBrowser ?? 500;
  }

  private async launch(): Promise<Slot> {
    const profileDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-chromium-'));
    try {
      const browser = await puppeteer.launch({
        executablePath: this.executablePath,
        headless: true,
        pipe: true,
        userDataDir: profileDir,
        args: [...CHROMIUM_ARGS],
        handleSIGINT: false,
        handleSIGTERM: false,
        handleSIGHUP: false,
      });
      const slot: Slot = { browser, profileDir, renders: 0, busy: false, alive: true };
      browser.once('disconnected', () => this.drop(slot, true));
      return slot;
    } catch (error) {
      rmSync(profileDir, { recursive: true, force: true });
      throw new Error(
        `Chromium could not be started from ${this.executablePath}: ${(error as Error).message}`,
        {
          cause: error,
        },
      );
    }
  }

  private drop(slot: Slot, died: boolean): void {
    if (!slot.alive) return;
    slot.alive = false;
    if (died && !this.closed) this.restarts += 1;
    const index = this.slots.indexOf(slot);
    if (index >= 0) this.slots.splice(index, 1);
    removeProfileWhenGone(slot);
  }

  private async acquire(): Promise<Slot> {
    if (this.closed) throw new Error('The browser pool is closed.');
    const idle = this.slots.find((slot) => slot.alive && !slot.busy);
    if (idle) {
      idle.busy = true;
      return idle;
    }
    if (this.slots.length + this.launching < this.size) {
      this.launching += 1;
      try {
        const slot = await this.launch();
        if (this.closed) {
          await slot.browser.close().catch(() => undefined);
          throw new Error('The browser pool is closed.');
        }
        slot.busy = true;
        this.slots.push(slot);
        return slot;
      } finally {
        this.launching -= 1;
      }
    }
    return new Promise((resolve, reject) => this.waiting.push({ resolve, reject }));
  }

  private async release(slot: Slot): Promise<void> {
    slot.renders += 1;
    if (slot.alive && slot.renders >= this.maxRenders) {
      this.drop(slot, false);
      await slot.browser.close().catch(() => undefined);
    }
    const next = this.waiting.shift();
    if (!next) {
      slot.busy = false;
      return;
    }
    if (slot.alive) {
      next.resolve(slot);
      return;
    }
    // The browser died or was recycled: hand the waiting caller a fresh one.
    slot.busy = false;
    this.acquire().then(next.resolve, next.reject);
  }

  /** Runs `work` with a browser of the pool to itself; the browser returns to the pool afterwards. */
  async withBrowser<T>(work: (browser: Browser) => Promise<T>): Promise<T> {
    const slot = await this.acquire();
    try {
      return await work(slot.browser);
    } finally {
      await this.release(slot);
    }
  }

  /** Starts the browsers ahead of the first render. */
  async warm(): Promise<void> {
    await Promise.all(Array.from({ length: this.size }, () => this.withBrowser(async () => undefined)));
  }

  /** Closes every browser and removes their profiles; later renders are refused. */
  async close(): Promise<void> {
    this.closed = true;
    for (const waiter of this.waiting.splice(0)) waiter.reject(new Error('The browser pool is closed.'));
    const slots = [...this.slots];
    await Promise.all(
      slots.map(async (slot) => {
        await slot.browser.close().catch(() => undefined);
        this.drop(slot, false);
      }),
    );
  }
}
