import path from 'node:path';
import { eq } from 'drizzle-orm';
import type { Browser } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { organisations } from '../../server/platform/db/schema/index.ts';
import { launchChromium, newPage, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  await world.database.db
    .update(organisations)
    .set({ timeZone: 'Europe/Berlin' })
    .where(eq(organisations.id, world.organisationId));
  const analyst = world.users.analyst!;
  await signIn(world.app, analyst.email, analyst.password);
  await signIn(world.app, analyst.email, 'a mistyped password');
  const actor = { organisationId: world.organisationId, actorUserId: analyst.id, actorLabel: analyst.email };
  // Invented study values, as the study service records them.
  await appendAuditEvent(world.database.db, {
    ...actor,
    action: 'study.created',
    recordType: 'study',
    recordId: 7,
    after: {
      title: 'Long-term 25 °C',
      product: 'Calvorin 5 mg tablets (invented)',
      lowerLimit: 95,
      batches: ['CV-101'],
    },
  });
  await appendAuditEvent(world.database.db, {
    ...actor,
    action: 'study.updated',
    recordType: 'study',
    recordId: 7,
    before: { lowerLimit: 95, batches: ['CV-101'] },
    after: { lowerLimit: 94.5, batches: ['CV-101', 'CV-102'] },
    context: { ip: '127.0.0.1' },
  });
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await world?.close();
});

describe('the audit trail viewer in Chromium', () => {
  it('a reviewer opens it from the menu, filters by action, sees the diff, and checks the chain', async () => {
    const page = await newPage(browser, { viewport: { width: 1280, height: 900 } });
    const ui = locate(page);
    const consoleErrors: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error') consoleErrors.push(message.text());
    });
    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.reviewer!.email);
    await ui.getByLabel('Password').fill(world.users.reviewer!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-reviewer').waitFor();

    await ui.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
    await ui.getByRole('heading', { name: 'Audit trail', level: 1 }).waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'audit-trail.png'), fullPage: true });

    await ui.getByLabel('Action').selectOption('study.updated');
    await ui.getByLabel('Person').selectOption({ label: `Test analyst (${world.users.analyst!.email})` });
    await ui.getByRole('button', { name: 'Show events' }).click();
    await expect.poll(() => page.url()).toContain('action=study.updated');
    const rows = ui.locator('tr[id^="event-"]');
    await expect.poll(() => rows.count()).toBe(1);
    const row = rows.first();
    expect(await row.textContent()).toContain('94.5');
    expect(await row.getByText('changed').count()).toBe(2);
    expect(await row.locator('time').textContent()).toMatch(/UTC\+0[12]:00$/);
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'audit-trail-filtered.png'), fullPage: true });

    await ui.getByRole('link', { name: 'Check the hash chain' }).click();
    await ui.getByRole('button', { name: 'Run the check now' }).click();
    await ui.getByRole('heading', { name: 'The chain is intact' }).waitFor();
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'audit-chain-check.png'), fullPage: true });
    expect(consoleErrors).toEqual([]);
  });
});
