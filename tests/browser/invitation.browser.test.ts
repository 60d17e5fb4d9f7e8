import path from 'node:path';
import { eq, sql } from 'drizzle-orm';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { newLinkToken } from '../../server/features/people/invitations.ts';
import { invitations, users } from '../../server/platform/db/schema/index.ts';
import { launchChromium, SCREENSHOT_DIR, serve } from '../support/browser.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

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
    const page = await browser.newPage();
    await page.goto(`${server.url}/signin`);
    await page.getByLabel('E-mail address').fill(world.users.admin!.email);
    await page.getByLabel('Password').fill(world.users.admin!.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.locator('#panel-admin').waitFor();

    await page
      .getByRole('navigation', { name: 'Main' })
      .getByRole('link', { name: 'People and roles' })
      .click();
    await page.getByRole('heading', { name: 'People and roles' }).waitFor();
    await page.getByRole('link', { name: 'Invite a person' }).click();
    await page.getByLabel('Full name').fill(inviteeName);
    await page.getByLabel('E-mail address').fill(inviteeEmail);
    // Reviewer is offered ticked; leave the other roles unticked.
    expect(await page.getByRole('checkbox', { name: /reviewer/ }).isChecked()).toBe(true);
    expect(await page.getByRole('checkbox', { name: /analyst/ }).isChecked()).toBe(false);
    await shot(page, '1-invite-form');
    await page.getByRole('button', { name: 'Send the invitation' }).click();
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Invitation for');
    const openInvitations = page.getByRole('table', { name: 'Open invitations' });
    await openInvitations.getByText(inviteeEmail).waitFor();
    await shot(page, '2-people-with-invitation');

    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outbox' }).click();
    await page.getByRole('heading', { name: 'Outbox' }).waitFor();
    const row = page.getByRole('row').filter({ hasText: inviteeEmail });
    await row.getByRole('link', { name: /Invitation to/ }).click();
    const link = page.getByRole('link', { name: /\/invitations\// });
    invitationLink = (await link.getAttribute('href'))!;
    expect(invitationLink.startsWith(`${server.url}/invitations/`)).toBe(true);
    await shot(page, '3-outbox-message');
    await page.close();
  });

  it('the invitee is refused a weak password, sets a good one and signs in as reviewer', async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    await page.goto(invitationLink);
    await page.getByRole('heading', { name: /Join Test Laboratory/ }).waitFor();
    await page.getByLabel('Choose a password').fill('password26');
    await page.getByLabel('Type it again').fill('password26');
    await page.getByRole('button', { name: 'Set my password and join' }).click();
    const problems = page.getByRole('alert');
    await expect.poll(() => problems.textContent()).toContain('at least 12 characters');
    expect(await problems.textContent()).toContain('most common passwords');
    await shot(page, '4-weak-password-refused');

    await page.getByLabel('Choose a password').fill(inviteePassword);
    await page.getByLabel('Type it again').fill(inviteePassword);
    await page.getByRole('button', { name: 'Set my password and join' }).click();
    await page.getByRole('heading', { name: 'Your account is ready' }).waitFor();
    expect(await page.getByRole('status').textContent()).toContain('reviewer');
    await shot(page, '5-account-ready');

    await page.getByRole('link', { name: 'Sign in' }).click();
    await page.getByLabel('E-mail address').fill(inviteeEmail);
    await page.getByLabel('Password').fill(inviteePassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.locator('#panel-reviewer').waitFor();
    expect(await page.locator('#panel-analyst').count()).toBe(0);
    expect(await page.locator('#panel-admin').count()).toBe(0);
    expect(await page.getByRole('banner').textContent()).toContain(inviteeName);
    await shot(page, '6-reviewer-dashboard');
    await context.close();
  });

  it('the used link is refused with a clear message', async () => {
    const page = await browser.newPage();
    const response = await page.goto(invitationLink);
    expect(response?.status()).toBe(410);
    expect(await page.getByRole('alert').textContent()).toContain('already been used');
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
    const page = await browser.newPage();
    const response = await page.goto(`${server.url}/invitations/${token}`);
    expect(response?.status()).toBe(410);
    expect(await page.getByRole('alert').textContent()).toContain('has expired');
    await shot(page, '8-expired-link');
    await page.close();
  });

  it('the admin sees the new reviewer in the list and on their page (screenshots of the admin pages)', async () => {
    const page = await browser.newPage();
    await page.goto(`${server.url}/signin`);
    await page.getByLabel('E-mail address').fill(world.users.admin!.email);
    await page.getByLabel('Password').fill(world.users.admin!.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.locator('#panel-admin').waitFor();
    await page.goto(`${server.url}/admin/people`);
    await page.getByRole('link', { name: inviteeName }).click();
    await page.getByRole('heading', { name: inviteeName }).waitFor();
    expect(await page.getByRole('checkbox', { name: /reviewer/ }).isChecked()).toBe(true);
    await page.getByRole('cell', { name: 'user.created' }).waitFor();
    await shot(page, '9-person-page');
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Settings' }).click();
    await page.getByRole('heading', { name: 'Organisation settings' }).waitFor();
    await shot(page, '10-settings');
    // A mistake is shown beside its field, and nothing is saved.
    await page.getByLabel('Signature meanings').fill('');
    await page.getByLabel('Time zone for reports').fill('Europe/Atlantis');
    await page.getByLabel('Report number format').fill('QC-{YY}-{NNN}');
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect.poll(() => page.locator('#timeZone-error').textContent()).toContain('Not an IANA time zone');
    expect(await page.locator('#signatureMeanings-error').textContent()).toContain('at least one meaning');
    await shot(page, '11-settings-errors');
    await page.getByLabel('Signature meanings').fill('Reviewed\nApproved');
    await page.getByLabel('Time zone for reports').fill('Europe/Berlin');
    await page.getByRole('button', { name: 'Preview the report number' }).click();
    await expect.poll(() => page.locator('#report-number-preview').textContent()).toMatch(/QC-\d{2}-001/);
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Saved:');
    expect(await page.locator('#report-number-preview').textContent()).toMatch(
      /Next report number: QC-\d{2}-001/,
    );
    const [created] = await world.database.db.select().from(users).where(eq(users.email, inviteeEmail));
    expect(created?.active).toBe(true);
    await page.close();
  });
});
