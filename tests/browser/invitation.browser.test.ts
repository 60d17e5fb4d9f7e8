import path from 'node:path';
import { eq, sql } from 'drizzle-orm';
import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { newLinkToken } from '../../server/features/people/link-tokens.ts';
import { invitations, users } from '../../server/platform/db/schema/index.ts';
import { launchChromium, newPage, SCREENSHOT_DIR, serve, TestContext } from '../support/browser.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';
import { locate } from './page-locator.ts';

/**
 * The admin invites a new reviewer in Chromium; the invitation is in the outbox; the invitee opens
 * the link in a browser of their own, is refused a weak password, sets a good one and signs in
 * with the reviewer role; the used link and an expired one are refused with a clear message.
 */

let world: TestWorld;
let browser: Browser;
let server: Awaited<ReturnType<typeof serve>>;
let smtp: TestSmtp;

const inviteeEmail = `rowan.reviewer.${Date.now()}@test.example`;
const inviteeName = 'Rowan Reviewer';
const inviteePassword = 'Quartz-harbour-58-lanterns';
const shot = (page: Page, name: string) =>
  page.screenshot({ path: path.join(SCREENSHOT_DIR, `invitation-${name}.png`), fullPage: true });

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'] });
  server = await serve(world.app);
  // Links in messages are built on PUBLIC_URL: point it at this test's server before mail starts.
  process.env.PUBLIC_URL = server.url;
  smtp = await startTestSmtp(world.database.db);
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await smtp?.close();
  await server?.close();
  await world?.close();
});

describe('inviting a reviewer through the pages', () => {
  let invitationLink: string;

  it('the admin invites a new reviewer and finds the invitation in the outbox', async () => {
    const page = await newPage(browser);
    const ui = locate(page);
    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.admin!.email);
    await ui.getByLabel('Password').fill(world.users.admin!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-admin').waitFor();

    await ui
      .getByRole('navigation', { name: 'Main' })
      .getByRole('link', { name: 'People and roles' })
      .click();
    await ui.getByRole('heading', { name: 'People and roles' }).waitFor();
    await ui.getByRole('link', { name: 'Invite a person' }).click();
    await ui.getByLabel('Full name').fill(inviteeName);
    await ui.getByLabel('E-mail address').fill(inviteeEmail);
    // No role is offered ticked (least privilege); reviewer, a signing role, needs a confirmation.
    expect(await ui.getByRole('checkbox', { name: /^reviewer/ }).isChecked()).toBe(false);
    expect(await ui.getByRole('checkbox', { name: /^analyst/ }).isChecked()).toBe(false);
    await ui.getByRole('checkbox', { name: /^reviewer/ }).check();
    await ui.getByRole('button', { name: 'Send the invitation' }).click();
    await ui.getByText(/^Reviewer is a signing role/).waitFor();
    await ui.getByRole('checkbox', { name: /may e-sign records/ }).check();
    await shot(page, '1-invite-form');
    await ui.getByRole('button', { name: 'Send the invitation' }).click();
    await expect.poll(() => ui.getByRole('status').first().textContent()).toContain('Invitation for');
    const openInvitations = ui.getByRole('table', { name: 'Open invitations' });
    await openInvitations.getByText(inviteeEmail).waitFor();
    await shot(page, '2-people-with-invitation');

    await ui.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outbox' }).click();
    await ui.getByRole('heading', { name: 'Outbox' }).waitFor();
    const row = ui.getByRole('row').filter({ hasText: inviteeEmail });
    await row.getByRole('link', { name: /Invitation to/ }).click();
    const link = ui.getByRole('link', { name: /\/invitations\// });
    invitationLink = (await link.getAttribute('href'))!;
    expect(invitationLink.startsWith(`${server.url}/invitations/`)).toBe(true);
    await shot(page, '3-outbox-message');
    await page.close();
  });

  it('the invitee is refused a weak password, sets a good one and signs in as reviewer', async () => {
    const context = await TestContext.open(browser);
    const page = await context.newPage();
    const ui = locate(page);
    await page.goto(invitationLink);
    await ui.getByRole('heading', { name: /Join Test Laboratory/ }).waitFor();
    await ui.getByLabel('Choose a password').fill('password26');
    await ui.getByLabel('Type it again').fill('password26');
    await ui.getByRole('button', { name: 'Set my password and join' }).click();
    const problems = ui.getByRole('alert');
    await expect.poll(() => problems.textContent()).toContain('at least 12 characters');
    expect(await problems.textContent()).toContain('most common passwords');
    await shot(page, '4-weak-password-refused');

    await ui.getByLabel('Choose a password').fill(inviteePassword);
    await ui.getByLabel('Type it again').fill(inviteePassword);
    await ui.getByRole('button', { name: 'Set my password and join' }).click();
    await ui.getByRole('heading', { name: 'Your account is ready' }).waitFor();
    expect(await ui.getByRole('status').textContent()).toContain('reviewer');
    await shot(page, '5-account-ready');

    await ui.getByRole('link', { name: 'Sign in' }).click();
    await ui.getByLabel('E-mail address').fill(inviteeEmail);
    await ui.getByLabel('Password').fill(inviteePassword);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-reviewer').waitFor();
    expect(await ui.locator('#panel-analyst').count()).toBe(0);
    expect(await ui.locator('#panel-admin').count()).toBe(0);
    expect(await ui.getByRole('banner').textContent()).toContain(inviteeName);
    await shot(page, '6-reviewer-dashboard');
    await context.close();
  });

  it('the used link is refused with a clear message', async () => {
    const page = await newPage(browser);
    const ui = locate(page);
    const response = await page.goto(invitationLink);
    expect(response?.status()).toBe(410);
    expect(await ui.getByRole('alert').textContent()).toContain('already been used');
    await shot(page, '7-used-link');
    await page.close();
  });

  it('an expired link is refused with a clear message', async () => {
    const { token, digest } = newLinkToken();
    await world.database.db.insert(invitations).values({
      organisationId: world.organisationId,
      email: `late.${Date.now()}@test.example`,
      fullName: 'Late Invitee',
      roles: ['reviewer'],
      tokenSha256: digest,
      expiresAt: sql`now() - interval '1 day'` as unknown as Date,
      invitedBy: world.users.admin!.id,
    });
    const page = await newPage(browser);
    const ui = locate(page);
    const response = await page.goto(`${server.url}/invitations/${token}`);
    expect(response?.status()).toBe(410);
    expect(await ui.getByRole('alert').textContent()).toContain('has expired');
    await shot(page, '8-expired-link');
    await page.close();
  });

  it('the admin sees the new reviewer in the list and on their page (screenshots of the admin pages)', async () => {
    const page = await newPage(browser);
    const ui = locate(page);
    await page.goto(`${server.url}/signin`);
    await ui.getByLabel('E-mail address').fill(world.users.admin!.email);
    await ui.getByLabel('Password').fill(world.users.admin!.password);
    await ui.getByRole('button', { name: 'Sign in' }).click();
    await ui.locator('#panel-admin').waitFor();
    await page.goto(`${server.url}/admin/people`);
    await ui.getByRole('link', { name: inviteeName }).click();
    await ui.getByRole('heading', { name: inviteeName }).waitFor();
    expect(await ui.getByRole('checkbox', { name: /reviewer/ }).isChecked()).toBe(true);
    await ui.getByRole('cell', { name: 'user.created' }).waitFor();
    await shot(page, '9-person-page');
    await ui.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Settings' }).click();
    await ui.getByRole('heading', { name: 'Organisation settings' }).waitFor();
    await shot(page, '10-settings');
    // A mistake is shown beside its field, and nothing is saved.
    await ui.getByLabel('Signature meanings').fill('');
    await ui.getByLabel('Time zone for reports').fill('Europe/Atlantis');
    await ui.getByLabel('Report number format').fill('QC-{YY}-{NNN}');
    await ui.getByRole('button', { name: 'Save settings' }).click();
    await expect.poll(() => ui.locator('#timeZone-error').textContent()).toContain('Not an IANA time zone');
    expect(await ui.locator('#signatureMeanings-error').textContent()).toContain('at least one meaning');
    await shot(page, '11-settings-errors');
    await ui.getByLabel('Signature meanings').fill('Reviewed\nApproved');
    await ui.getByLabel('Time zone for reports').fill('Europe/Berlin');
    await ui.getByRole('button', { name: 'Preview the report number' }).click();
    await expect.poll(() => ui.locator('#report-number-preview').textContent()).toMatch(/QC-\d{2}-001/);
    await ui.getByRole('button', { name: 'Save settings' }).click();
    await expect.poll(() => ui.getByRole('status').first().textContent()).toContain('Saved:');
    expect(await ui.locator('#report-number-preview').textContent()).toMatch(
      /Next report number: QC-\d{2}-001/,
    );
    const [created] = await world.database.db.select().from(users).where(eq(users.email, inviteeEmail));
    expect(created?.active).toBe(true);
    await page.close();
  });
});
