import { and, desc, eq, sql } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { newLinkToken } from '../../server/features/people/link-tokens.ts';
import { auditEvents, invitations, memberships, users } from '../../server/platform/db/schema/index.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Invitations end to end on the real database and the app's own SMTP server: the admin invites,
 * the message with its one-time link lands in `received_mail`, the invitee chooses a password
 * (the policy refuses weak ones), signs in with the invited role; a used, expired, withdrawn or
 * unknown link is refused with a message that says so.
 */

let world: TestWorld;
let other: TestWorld;
let smtp: TestSmtp;
let admin: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

const linkIn = (text: string, path: 'invitations' | 'password-reset') =>
  new RegExp(`/${path}/([A-Za-z0-9_-]{43})`).exec(text)?.[1];

async function invite(fields: Record<string, string | string[]>) {
  return admin
    .post('/admin/people/invite')
    .type('form')
    .send({ _csrf: token, confirmSigningRole: 'yes', ...fields });
}

async function latestEvent(action: string) {
  const [event] = await world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.organisationId, world.organisationId), eq(auditEvents.action, action)))
    .orderBy(desc(auditEvents.id))
    .limit(1);
  return event;
}

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], analyst: ['analyst'] }, { signInRateLimit: 100 });
  other = await createTestWorld({ elsewhere: ['analyst'] });
  smtp = await startTestSmtp(world.database.db);
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await admin.get('/admin/people/invite')).text);
});
afterAll(async () => {
  await smtp?.close();
  await other?.close();
  await world?.close();
});

describe('inviting a new reviewer', () => {
  const email = `new.reviewer.${Date.now()}@test.example`;
  const goodPassword = 'Amber-kettle-41-rivers';
  let link: string;

  it('the invitation is mailed through the app with a one-time link and recorded', async () => {
    const response = await invite({
      fullName: 'Nova Reviewer',
      email: email.toUpperCase(),
      roles: 'reviewer',
    });
    expect(response.status).toBe(303);
    expect(response.headers.location).toBe('/admin/people');
    const mail = await smtp.waitForMailTo(email);
    expect(mail.subject).toContain('Invitation to');
    link = linkIn(mail.textBody, 'invitations')!;
    expect(link).toHaveLength(43);
    // Only the SHA-256 of the token is stored (FIPS 180-4 digest via node:crypto).
    const [row] = await world.database.db.select().from(invitations).where(eq(invitations.email, email));
    expect(row!.tokenSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(row!.tokenSha256).not.toContain(link);
    expect(row!.roles).toEqual(['reviewer']);
    const hours = (row!.expiresAt.getTime() - row!.createdAt.getTime()) / 3_600_000;
    expect(hours).toBeCloseTo(72, 6);
    const event = await latestEvent('user.invited');
    expect(event?.afterValue).toMatchObject({ email, roles: ['reviewer'], fullName: 'Nova Reviewer' });
    const page = await admin.get('/admin/people');
    expect(page.text).toContain('Open invitations');
    expect(page.text).toContain(email);
  });

  it('the link opens the page that asks for a password and shows the policy', async () => {
    const page = await request(world.app).get(`/invitations/${link}`);
    expect(page.status).toBe(200);
    expect(page.headers['cache-control']).toBe('no-store');
    expect(page.text).toContain('Nova Reviewer');
    expect(page.text).toContain('At least 12 characters.');
  });

  it('passwords the policy refuses are refused, each with its reason, and nothing is created', async () => {
    const agent = request.agent(world.app);
    const csrf = csrfFrom((await agent.get(`/invitations/${link}`)).text);
    const attempts: [string, string][] = [
      ['short1A', 'at least 12 characters'],
      ['alllowercaseletters', 'at least 3 kinds of character'],
      [email, 'e-mail address'],
      // A very common password with digits and a symbol added (common practice list).
      ['Password1234!', 'most common passwords'],
    ];
    for (const [password, reason] of attempts) {
      const refused = await agent
        .post(`/invitations/${link}`)
        .type('form')
        .send({ _csrf: csrf, password, confirmPassword: password });
      expect(refused.status).toBe(400);
      expect(refused.text).toContain(reason);
    }
    const mismatch = await agent
      .post(`/invitations/${link}`)
      .type('form')
      .send({ _csrf: csrf, password: goodPassword, confirmPassword: `${goodPassword}x` });
    expect(mismatch.status).toBe(400);
    expect(mismatch.text).toContain('The two passwords are not the same.');
    expect(await world.database.db.select().from(users).where(eq(users.email, email))).toEqual([]);
  });

  it('a good password creates the account with the invited role; the invitee signs in as reviewer', async () => {
    const agent = request.agent(world.app);
    const csrf = csrfFrom((await agent.get(`/invitations/${link}`)).text);
    const accepted = await agent
      .post(`/invitations/${link}`)
      .type('form')
      .send({ _csrf: csrf, password: goodPassword, confirmPassword: goodPassword });
    expect(accepted.status).toBe(200);
    expect(accepted.text).toContain('Your account is ready');
    const [user] = await world.database.db.select().from(users).where(eq(users.email, email));
    expect(user!.fullName).toBe('Nova Reviewer');
    expect(user!.passwordHash).toMatch(/^\$argon2id\$/);
    const roles = await world.database.db
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.userId, user!.id), eq(memberships.organisationId, world.organisationId)));
    expect(roles).toEqual([{ role: 'reviewer' }]);
    expect((await latestEvent('user.created'))?.afterValue).toMatchObject({ email, roles: ['reviewer'] });
    expect((await latestEvent('invitation.accepted'))?.recordId).toBeDefined();

    const { agent: invitee, response } = await signIn(world.app, email, goodPassword);
    expect(response.status).toBe(303);
    const dashboard = await invitee.get('/');
    expect(dashboard.text).toContain('id="panel-reviewer"');
    expect(dashboard.text).not.toContain('id="panel-analyst"');
    expect(dashboard.text).not.toContain('id="panel-admin"');
  });

  it('the used link is refused with a clear message, by page and by post', async () => {
    const page = await request(world.app).get(`/invitations/${link}`);
    expect(page.status).toBe(410);
    expect(page.text).toContain('already been used');
    const agent = request.agent(world.app);
    const csrf = csrfFrom((await agent.get('/signin')).text);
    const again = await agent
      .post(`/invitations/${link}`)
      .type('form')
      .send({ _csrf: csrf, password: 'Another-good-pass-99', confirmPassword: 'Another-good-pass-99' });
    expect(again.status).toBe(410);
    expect(again.text).toContain('already been used');
  });

  it('the database refuses any change to a used invitation (trigger)', async () => {
    await expect(
      world.database.db.update(invitations).set({ usedAt: null }).where(eq(invitations.email, email)),
    ).rejects.toThrow();
    await expect(world.database.db.delete(invitations).where(eq(invitations.email, email))).rejects.toThrow();
  });

  it('an address that is already a member is refused beside the e-mail field', async () => {
    const refused = await invite({ fullName: 'Again', email, roles: 'analyst' });
    expect(refused.status).toBe(409);
    expect(refused.text).toContain('id="email-error"');
    expect(refused.text).toContain('already a member');
  });
});

describe('links that no longer work', () => {
  it('an expired invitation is refused and creates nothing', async () => {
    const { token: expired, digest } = newLinkToken();
    const email = `late.${Date.now()}@test.example`;
    await world.database.db.insert(invitations).values({
      organisationId: world.organisationId,
      email,
      fullName: 'Late Invitee',
      roles: ['reviewer'],
      tokenSha256: digest,
      expiresAt: sql`now() - interval '1 hour'` as unknown as Date,
      invitedBy: world.users.admin!.id,
    });
    const page = await request(world.app).get(`/invitations/${expired}`);
    expect(page.status).toBe(410);
    expect(page.text).toContain('has expired');
    const agent = request.agent(world.app);
    const csrf = csrfFrom((await agent.get('/signin')).text);
    const posted = await agent
      .post(`/invitations/${expired}`)
      .type('form')
      .send({ _csrf: csrf, password: 'Amber-kettle-41-rivers', confirmPassword: 'Amber-kettle-41-rivers' });
    expect(posted.status).toBe(410);
    expect(await world.database.db.select().from(users).where(eq(users.email, email))).toEqual([]);
  });

  it('an unknown or malformed link is a 404 page', async () => {
    const unknown = await request(world.app)
      .get(`/invitations/${newLinkToken().token}`)
      .set('Accept', 'text/html');
    expect(unknown.status).toBe(404);
    expect(unknown.text).toContain('not valid');
    expect((await request(world.app).get('/invitations/abc').set('Accept', 'text/html')).status).toBe(404);
  });

  it('inviting again replaces the earlier link, and a withdrawn invitation stops working', async () => {
    const email = `twice.${Date.now()}@test.example`;
    await invite({ fullName: 'Twice Invited', email, roles: ['analyst', 'reviewer'] });
    const first = linkIn((await smtp.waitForMailTo(email)).textBody, 'invitations')!;
    await invite({ fullName: 'Twice Invited', email, roles: ['analyst'] });
    await expect.poll(async () => (await smtp.mailTo(email)).length).toBe(2);
    const second = linkIn((await smtp.mailTo(email))[1]!.textBody, 'invitations')!;
    expect((await request(world.app).get(`/invitations/${first}`)).status).toBe(410);
    expect((await request(world.app).get(`/invitations/${second}`)).status).toBe(200);

    const [open] = await world.database.db
      .select()
      .from(invitations)
      .where(and(eq(invitations.email, email), sql`${invitations.expiresAt} > now()`));
    const withdrawn = await admin
      .post(`/admin/invitations/${open!.id}/revoke`)
      .type('form')
      .send({ _csrf: token });
    expect(withdrawn.status).toBe(303);
    const page = await request(world.app).get(`/invitations/${second}`);
    expect(page.status).toBe(410);
    expect(page.text).toContain('has expired');
    expect((await latestEvent('invitation.revoked'))?.recordId).toBe(String(open!.id));
  });
});

describe('an address that already has an account elsewhere', () => {
  it('joins this organisation with the existing account: no second account, password unchanged', async () => {
    const person = other.users.elsewhere!;
    await invite({ fullName: 'Someone Elsewhere', email: person.email, roles: 'reviewer' });
    const link = linkIn((await smtp.waitForMailTo(person.email)).textBody, 'invitations')!;

    const anonymous = request.agent(world.app);
    const page = await anonymous.get(`/invitations/${link}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('already has a Rateledger account');
    expect(page.text).not.toContain('name="password"');
    const refused = await anonymous
      .post(`/invitations/${link}`)
      .type('form')
      .send({
        _csrf: csrfFrom((await anonymous.get('/signin')).text),
        password: 'Amber-kettle-41-rivers',
        confirmPassword: 'Amber-kettle-41-rivers',
      })
      .set('Accept', 'text/html');
    expect(refused.status).toBe(403);
    expect(refused.text).toContain(`Sign in as ${person.email}`);

    const { agent } = await signIn(world.app, person.email, person.password);
    const signedInPage = await agent.get(`/invitations/${link}`);
    expect(signedInPage.text).toContain('Join ');
    const joined = await agent
      .post(`/invitations/${link}`)
      .type('form')
      .send({ _csrf: csrfFrom(signedInPage.text) });
    expect(joined.status).toBe(200);
    expect(joined.text).toContain('You joined');
    const accounts = await world.database.db.select().from(users).where(eq(users.email, person.email));
    expect(accounts).toHaveLength(1);
    const here = await world.database.db
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.userId, person.id), eq(memberships.organisationId, world.organisationId)));
    expect(here).toEqual([{ role: 'reviewer' }]);
    expect((await latestEvent('user.joined-organisation'))?.recordId).toBe(String(person.id));
    // The password is still the one they had.
    expect((await signIn(world.app, person.email, person.password)).response.status).toBe(303);
  });
});
