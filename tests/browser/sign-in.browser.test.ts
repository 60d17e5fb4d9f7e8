import path from 'node:path';
import type { Browser } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, newPage, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], admin: ['admin'] });
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await world?.close();
});

describe('sign-in through the real page in Chromium', () => {
  it('signs in, lands on the role dashboard with its island, and saves screenshots', async () => {
    const page = await newPage(browser);
    const ui = locate(page);
    const consoleErrors: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error') consoleErrors.push(message.text());
    });
    await page.goto(`${server.url}/`);
    await expect.poll(() => page.url()).toContain('/signin');
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'sign-in.png'), fullPage: true });

    await ui.getByLabel('E-mail address').fill(world.users.analyst!.email);
    await ui.getByLabel('Password').fill(world.users.analyst!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.getByRole('heading', { name: /Good to see you/ }).waitFor();
    expect(await ui.locator('#panel-analyst').textContent()).toBe('Analyst');
    // The React island fetched the user's own audit events through the API.
    await ui.getByRole('cell', { name: 'Signed in' }).first().waitFor();
    // Fonts come bundled with the app, not from a CDN.
    const bodyFont = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
    expect(bodyFont).toContain('Source Sans 3');
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'analyst-dashboard.png'), fullPage: true });

    await page.goto(`${server.url}/app/activity`);
    await ui.getByRole('heading', { name: 'My activity' }).waitFor();
    await ui.getByRole('cell', { name: 'Signed in' }).first().waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'client-activity.png'), fullPage: true });

    const forbidden = await page.goto(`${server.url}/admin/people`);
    expect(forbidden?.status()).toBe(403);
    expect(consoleErrors.filter((text) => !text.includes('403'))).toEqual([]);
  });

  it('a wrong password shows the message beside the form', async () => {
    const page = await newPage(browser);
    const ui = locate(page);
    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.admin!.email);
    await ui.getByLabel('Password').fill('wrong password');
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await expect.poll(() => ui.getByRole('alert').textContent()).toContain('not right');
    await ui.getByLabel('Password').fill(world.users.admin!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-admin').waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'admin-dashboard.png'), fullPage: true });
  });
});
