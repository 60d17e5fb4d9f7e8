import { and, desc, eq, inArray } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SIGN_IN_REFUSED } from '../../server/platform/auth/accounts.ts';
import { auditEvents, sessions, users } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, sessionCookie, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
beforeAll(async () => {
  world = await createTestWorld(
    {
      analyst: ['analyst'],
      reviewer: ['reviewer'],
      admin: ['admin'],
      locked: ['analyst'],
      both: ['analyst', 'reviewer'],
      spoofed: ['analyst'],
    },
    { lockoutThreshold: 3, signInRateLimit: 100 },
  );
});
afterAll(() => world.close());

/** The text of the page's alert, exactly as sent. */
const alertText = (html: string) => /role="alert"[^>]*>([^<]+)</.exec(html)?.[1];

const eventsFor = (userId: number) =>
  world.database.db
    .select()
    .from(auditEvents)
    .where(eq(auditEvents.actorUserId, userId))
    .orderBy(desc(auditEvents.id));

describe('sign-in', () => {
  it('a good password signs in and shows the dashboard of the role held', async () => {
    const { analyst } = world.users;
    const { agent, response } = await signIn(world.app, analyst!.email, analyst!.password);
    expect(response.status).toBe(303);
    expect(response.headers.location).toBe('/');
    const dashboard = await agent.get('/');
    expect(dashboard.status).toBe(200);
    expect(dashboard.text).toContain('id="panel-analyst"');
    expect(dashboard.text).not.toContain('id="panel-admin"');
    const events = await eventsFor(analyst!.id);
    expect(events[0]?.action).toBe('sign-in');
  });

  it('a user with two roles sees both panels', async () => {
    const { both } = world.users;
    const { agent } = await signIn(world.app, both!.email, both!.password);
    const dashboard = await agent.get('/');
    expect(dashboard.text).toContain('id="panel-analyst"');
    expect(dashboard.text).toContain('id="panel-reviewer"');
  });

  it('a wrong password is refused with a message that does not reveal whether the e-mail exists', async () => {
    const { reviewer } = world.users;
    const wrong = await signIn(world.app, reviewer!.email, 'not-the-password');
    const unknown = await signIn(world.app, 'nobody@test.example', 'whatever');
    expect(wrong.response.status).toBe(401);
    expect(unknown.response.status).toBe(401);
    expect(alertText(wrong.response.text)).toBe(alertText(unknown.response.text));
    expect(alertText(wrong.response.text)).toBe(SIGN_IN_REFUSED);
    expect((await eventsFor(reviewer!.id))[0]?.action).toBe('sign-in.failed');
    const unknownEvents = await world.database.db
      .select()
      .from(auditEvents)
      .where(eq(auditEvents.actorLabel, 'nobody@test.example'));
    expect(unknownEvents.map((event) => event.action)).toContain('sign-in.failed');
  });

  it('a form without e-mail or password asks for both, keeps the typed e-mail, and signs no one in', async () => {
    const { reviewer } = world.users;
    const blankPassword = await signIn(world.app, reviewer!.email, '');
    expect(blankPassword.response.status).toBe(401);
    expect(blankPassword.response.text).toContain('Enter your e-mail address and your password.');
    expect(blankPassword.response.text).toContain(`value="${reviewer!.email}"`);
    expect((await blankPassword.agent.get('/')).status).toBe(303);
  });
  it('locks the account after repeated failures, refuses even the right password, and audits it', async () => {
    const { locked } = world.users;
    for (let attempt = 0; attempt < 3; attempt += 1) await signIn(world.app, locked!.email, 'wrong');
    const [row] = await world.database.db.select().from(users).where(eq(users.id, locked!.id));
    expect(row!.lockedUntil).not.toBeNull();
    const afterLock = await signIn(world.app, locked!.email, locked!.password);
    expect(afterLock.response.status).toBe(401);
    // The same words as for any wrong password: they mention a lock without saying there is one.
    expect(alertText(afterLock.response.text)).toBe(SIGN_IN_REFUSED);
    const actions = (await eventsFor(locked!.id)).map((event) => event.action);
    expect(actions).toContain('account.locked');
    expect(actions[0]).toBe('sign-in.refused-locked');
  });

  it('regenerates the session id at sign-in and the old id grants nothing', async () => {
    const { analyst, admin } = world.users;
    const { agent, response: first } = await signIn(world.app, analyst!.email, analyst!.password);
    const before = sessionCookie(first);
    expect(before).toBeDefined();
    // Signing in again in the same browser, as someone else, must not keep the old id.
    const response = await agent
      .post('/signin')
      .type('form')
      .send({ _csrf: csrfFrom((await agent.get('/')).text), email: admin!.email, password: admin!.password });
    expect(response.status).toBe(303);
    const after = sessionCookie(response);
    expect(after).toBeDefined();
    expect(after).not.toBe(before);
    const withOld = await request(world.app).get('/api/me').set('Cookie', before!);
    expect(withOld.status).toBe(401);
    const withNew = await request(world.app).get('/api/me').set('Cookie', after!);
    expect(withNew.status).toBe(200);
    expect(withNew.body.email).toBe(admin!.email);
  });

  it('sets the session cookie HttpOnly and SameSite, and the anonymous form cookie too', async () => {
    const { analyst } = world.users;
    const { response } = await signIn(world.app, analyst!.email, analyst!.password);
    const cookies = response.headers['set-cookie'] as unknown as string[];
    const session = cookies.find((cookie) => cookie.startsWith('rateledger.sid='))!;
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(session).not.toMatch(/Secure/i);
    const page = await request(world.app).get('/signin');
    const form = (page.headers['set-cookie'] as unknown as string[])[0]!;
    expect(form).toMatch(/^rateledger\.form=[A-Za-z0-9_-]{43};/);
    expect(form).toMatch(/HttpOnly/i);
    expect(form).toMatch(/SameSite=Lax/i);
  });

  it('refuses a state-changing request without the CSRF token', async () => {
    const { analyst } = world.users;
    const noToken = await request
      .agent(world.app)
      .post('/signin')
      .type('form')
      .send({ email: analyst!.email, password: analyst!.password });
    expect(noToken.status).toBe(403);
    const { agent } = await signIn(world.app, analyst!.email, analyst!.password);
    const signOutWithoutToken = await agent.post('/signout').type('form').send({});
    expect(signOutWithoutToken.status).toBe(403);
    expect((await agent.get('/api/me')).status).toBe(200);
    const forged = await agent.post('/signout').type('form').send({ _csrf: 'forged-token' });
    expect(forged.status).toBe(403);
  });

  it('signs out with the token, records it and ends the session', async () => {
    const { reviewer } = world.users;
    const { agent } = await signIn(world.app, reviewer!.email, reviewer!.password);
    const dashboard = await agent.get('/');
    const out = await agent
      .post('/signout')
      .type('form')
      .send({ _csrf: csrfFrom(dashboard.text) });
    expect(out.status).toBe(303);
    expect((await agent.get('/api/me')).status).toBe(401);
    expect((await eventsFor(reviewer!.id))[0]?.action).toBe('sign-out');
  });

  it('never redirects to another site after sign-in', async () => {
    const { analyst } = world.users;
    const agent = request.agent(world.app);
    const page = await agent.get('/signin');
    const response = await agent
      .post('/signin')
      .type('form')
      .send({
        _csrf: csrfFrom(page.text),
        email: analyst!.email,
        password: analyst!.password,
        next: '//evil.example/',
      });
    expect(response.headers.location).toBe('/');
  });
});

describe('roles guard pages and API routes', () => {
  it('answers 403 to an analyst on an admin page and API route, 200 to the admin', async () => {
    const { analyst, admin } = world.users;
    const asAnalyst = (await signIn(world.app, analyst!.email, analyst!.password)).agent;
    const page = await asAnalyst.get('/admin/people').set('Accept', 'text/html');
    expect(page.status).toBe(403);
    expect(page.text).toContain('Not allowed');
    const api = await asAnalyst.get('/api/admin/people');
    expect(api.status).toBe(403);
    expect(api.body.error.message).toMatch(/admin/);
    const asAdmin = (await signIn(world.app, admin!.email, admin!.password)).agent;
    const people = await asAdmin.get('/api/admin/people');
    expect(people.status).toBe(200);
    expect(people.body.people.map((person: { email: string }) => person.email)).toContain(analyst!.email);
  });

  it('sends anonymous visitors of a page to sign-in and answers 401 on the API', async () => {
    const page = await request(world.app).get('/admin/people');
    expect(page.status).toBe(303);
    expect(page.headers.location).toBe('/signin?next=%2Fadmin%2Fpeople');
    expect((await request(world.app).get('/api/me')).status).toBe(401);
  });
});

describe('sign-in rate limit', () => {
  it('refuses further attempts from one address past the limit, with 429', async () => {
    const limited = await createTestWorld({ someone: ['analyst'] }, { signInRateLimit: 3 });
    try {
      const statuses: number[] = [];
      for (let attempt = 0; attempt < 4; attempt += 1) {
        statuses.push((await signIn(limited.app, limited.users.someone!.email, 'wrong')).response.status);
      }
      expect(statuses).toEqual([401, 401, 401, 429]);
    } finally {
      await limited.close();
    }
  });
});

describe('audit of sign-in events', () => {
  it('records failures with the typed e-mail and the client address', async () => {
    const rows = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.actorUserId, world.users.reviewer!.id),
          inArray(auditEvents.action, ['sign-in.failed']),
        ),
      );
    expect(rows.length).toBeGreaterThan(0);
    expect(rows[0]!.context).toMatchObject({ ip: expect.any(String) });
    expect(rows[0]!.organisationId).toBe(world.organisationId);
  });
});

describe('anonymous visitors leave no session behind', () => {
  const sessionIds = async () =>
    new Set((await world.database.db.select({ sid: sessions.sid }).from(sessions)).map((row) => row.sid));

  it('viewing the public pages and failing to sign in write no session row', async () => {
    const before = await sessionIds();
    // A crowd of first visits, each without cookies (what a flood of GET /signin looks like)…
    await Promise.all(Array.from({ length: 25 }, () => request(world.app).get('/signin')));
    // …and one visitor who looks around, fails to sign in and sends a form without its token.
    const visitor = request.agent(world.app);
    const page = await visitor.get('/signin');
    await visitor.get('/signin?next=%2Fstudies');
    await visitor.get(`/invitations/${'x'.repeat(43)}`).set('Accept', 'text/html');
    await visitor.get(`/password-reset/${'x'.repeat(43)}`).set('Accept', 'text/html');
    await visitor.get('/no-such-page').set('Accept', 'text/html');
    await visitor.get('/studies');
    const failed = await visitor
      .post('/signin')
      .type('form')
      .send({ _csrf: csrfFrom(page.text), email: world.users.analyst!.email, password: 'wrong' });
    expect(failed.status).toBe(401);
    expect((await visitor.post('/signin').type('form').send({ email: 'x@y.example' })).status).toBe(403);
    const after = await sessionIds();
    expect([...after].filter((sid) => !before.has(sid))).toEqual([]);

    // The count is real: a successful sign-in stores exactly one session.
    await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    expect([...(await sessionIds())].filter((sid) => !before.has(sid))).toHaveLength(1);
  });

  it('the anonymous form token is bound to its own cookie and only serves anonymous forms', async () => {
    const { analyst } = world.users;
    const first = request.agent(world.app);
    const second = request.agent(world.app);
    const firstToken = csrfFrom((await first.get('/signin')).text);
    const secondToken = csrfFrom((await second.get('/signin')).text);
    expect(firstToken).not.toBe(secondToken);
    // Another browser's token, or a cookie whose nonce was changed, is refused.
    const crossed = await second
      .post('/signin')
      .type('form')
      .send({ _csrf: firstToken, email: analyst!.email, password: analyst!.password });
    expect(crossed.status).toBe(403);
    const forgedCookie = await request(world.app)
      .post('/signin')
      .set('Cookie', `rateledger.form=${'A'.repeat(43)}`)
      .type('form')
      .send({ _csrf: firstToken, email: analyst!.email, password: analyst!.password });
    expect(forgedCookie.status).toBe(403);
    // Its own token works…
    const own = await first
      .post('/signin')
      .type('form')
      .send({ _csrf: firstToken, email: analyst!.email, password: analyst!.password });
    expect(own.status).toBe(303);
    // …but once signed in, only the session's token counts.
    expect((await first.post('/signout').type('form').send({ _csrf: firstToken })).status).toBe(403);
    expect((await first.get('/api/me')).status).toBe(200);
  });
});

describe('client addresses and proxies', () => {
  it('trusts no proxy by default: X-Forwarded-For changes neither the counted nor the recorded address', async () => {
    const { spoofed } = world.users;
    for (const address of ['198.51.100.1', '198.51.100.2', '198.51.100.3']) {
      const agent = request.agent(world.app);
      const page = await agent.get('/signin').set('X-Forwarded-For', address);
      await agent
        .post('/signin')
        .set('X-Forwarded-For', address)
        .type('form')
        .send({ _csrf: csrfFrom(page.text), email: spoofed!.email, password: 'wrong' });
    }
    // Three failures from one real address lock that address, whatever the header claimed.
    const agent = request.agent(world.app);
    const page = await agent.get('/signin').set('X-Forwarded-For', '198.51.100.4');
    const right = await agent
      .post('/signin')
      .set('X-Forwarded-For', '198.51.100.4')
      .type('form')
      .send({ _csrf: csrfFrom(page.text), email: spoofed!.email, password: spoofed!.password });
    expect(right.status).toBe(401);
    const failures = (await eventsFor(spoofed!.id)).filter((event) => event.action === 'sign-in.failed');
    expect(failures).toHaveLength(3);
    for (const event of failures) expect((event.context as { ip: string }).ip).toMatch(/127\.0\.0\.1$/);
  });

  it('believes a configured proxy, and marks the cookies Secure on an https site', async () => {
    const behindProxy = await createTestWorld(
      { someone: ['analyst'] },
      { trustProxy: ['loopback'], cookieSecure: true },
    );
    try {
      const viaTls = { 'X-Forwarded-Proto': 'https', 'X-Forwarded-For': '203.0.113.50' };
      const page = await request(behindProxy.app).get('/signin').set(viaTls);
      const formCookie = (page.headers['set-cookie'] as unknown as string[])[0]!;
      expect(formCookie).toMatch(/^__Host-rateledger\.form=/);
      expect(formCookie).toMatch(/; Secure/i);
      const someone = behindProxy.users.someone!;
      const response = await request(behindProxy.app)
        .post('/signin')
        .set(viaTls)
        .set('Cookie', formCookie.split(';')[0]!)
        .type('form')
        .send({ _csrf: csrfFrom(page.text), email: someone.email, password: someone.password });
      expect(response.status).toBe(303);
      const cookies = response.headers['set-cookie'] as unknown as string[];
      const session = cookies.find((cookie) => cookie.startsWith('rateledger.sid='))!;
      expect(session).toMatch(/; Secure/i);
      expect(cookies.find((cookie) => cookie.startsWith('__Host-rateledger.browser='))).toMatch(/; Secure/i);
      const [event] = await behindProxy.database.db
        .select()
        .from(auditEvents)
        .where(and(eq(auditEvents.actorUserId, someone.id), eq(auditEvents.action, 'sign-in')));
      expect((event!.context as { ip: string }).ip).toBe('203.0.113.50');
    } finally {
      await behindProxy.close();
    }
  });
});
