import path from 'node:path';
import type { Browser } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { launchChromium, newPage, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

/**
 * Issue 13 §8: "The audit trail's long values spill over the neighbouring column." Unbroken
 * values (a hash, a file name, a long key, a long actor label) must wrap inside their own cell:
 * measured in Chromium, no element of a cell of the events table reaches past that cell's right
 * edge, on the list and on the event's own page.
 */

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let eventId: number;
const UNBROKEN = 'x'.repeat(40) + 'A1B2C3D4'.repeat(30);

beforeAll(async () => {
  world = await createTestWorld({ reviewer: ['reviewer'] });
  ({ id: eventId } = await appendAuditEvent(world.database.db, {
    organisationId: world.organisationId,
    actorLabel: `someone.with.a.very.long.address.${'y'.repeat(80)}@test.example`,
    action: `upload.received.${'z'.repeat(60)}`,
    recordType: 'upload',
    recordId: `upload-${'9'.repeat(70)}`,
    before: { [`key_${'k'.repeat(70)}`]: UNBROKEN },
    after: { [`key_${'k'.repeat(70)}`]: `${UNBROKEN}-changed`, fileName: `${'f'.repeat(150)}.xlsx` },
    context: { userAgent: 'u'.repeat(300) },
  }));
  server = await serve(world.app);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await world?.close();
});

/** Cells of the events table with a descendant whose right edge lies beyond the cell's. */
const SPILLS = `(() => {
  const found = [];
  for (const cell of document.querySelectorAll('tr[id^="event-"] > td')) {
    const edge = cell.getBoundingClientRect().right + 0.5;
    for (const inner of cell.querySelectorAll('*')) {
      const box = inner.getBoundingClientRect();
      if (box.width > 0 && box.right > edge) { found.push(cell.cellIndex + ': ' + inner.tagName + ' ' + Math.round(box.right - edge) + 'px'); break; }
    }
  }
  return found;
})()`;

describe('long values on the audit trail page', () => {
  it('wrap inside their own column, on the list and on the event page', async () => {
    const page = await newPage(browser, { viewport: { width: 1280, height: 900 } });
    const ui = locate(page);
    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.reviewer!.email);
    await ui.getByLabel('Password').fill(world.users.reviewer!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-reviewer').waitFor();
    for (const address of [`${server.url}/audit`, `${server.url}/audit/events/${eventId}`]) {
      await page.goto(address, { waitUntil: 'load' });
      await page.$eval(`#event-${eventId} details`, (details) => details.setAttribute('open', ''));
      expect(await page.$(`#event-${eventId}`), address).not.toBeNull();
      expect(await page.evaluate(SPILLS), address).toEqual([]);
    }
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'audit-long-values.png'), fullPage: true });
  });
});
