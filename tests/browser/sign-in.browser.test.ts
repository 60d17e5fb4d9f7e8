import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

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
    const page = await browser.newPage();
    const consoleErrors: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error') consoleErrors.push(message.text());
    });
    await page.goto(`${server.url}/`);
    await expect.poll(() => page.url()).toContain('/signin');
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'sign-in.png'), fullPage: true });

    await page.getByLabel('E-mail address').fill(world.users.analyst!.email);
    await page.getByLabel('Password').fill(world.users.analyst!.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: /Good to see you/ }).waitFor();
    expect(await page.locator('#panel-analyst').textContent()).toBe('Analyst');
    // The React island fetched the user's own audit events through the API.
    await page.getByRole('cell', { name: 'Signed in' }).first().waitFor();
    // Fonts come bundled with the app, not from a CDN.
    const bodyFont = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
    expect(bodyFont).toContain('Source Sans 3');
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'analyst-dashboard.png'), fullPage: true });

    await page.goto(`${server.url}/app/activity`);
    await page.getByRole('heading', { name: 'My activity' }).waitFor();
    await page.getByRole('cell', { name: 'Signed in' }).first().waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'client-activity.png'), fullPage: true });

    const forbidden = await page.goto(`${server.url}/admin/people`);
    expect(forbidden?.status()).toBe(403);
    expect(consoleErrors.filter((text) => !text.includes('403'))).toEqual([]);
  });

  it('a wrong password shows the message beside the form', async () => {
    const page = await browser.newPage();
    await page.goto(`${server.url}/signin`);
    await page.getByLabel('E-mail address').fill(world.users.admin!.email);
    await page.getByLabel('Password').fill('wrong password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toContain('not right');
    await page.getByLabel('Password').fill(world.users.admin!.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.locator('#panel-admin').waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'admin-dashboard.png'), fullPage: true });
  });
});
