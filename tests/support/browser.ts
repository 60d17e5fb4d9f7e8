import { mkdirSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import type { Express } from 'express';
import { type Browser, chromium } from 'playwright-core';

/** Screenshots land in reports/screenshots (git-ignored) so a person can open them after a run. */
export const SCREENSHOT_DIR = path.resolve(import.meta.dirname, '../../reports/screenshots');

/** Debian's Chromium, with the flags this machine needs (root, no network beyond loopback). */
export async function launchChromium(): Promise<Browser> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-dev-shm-usage',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
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
