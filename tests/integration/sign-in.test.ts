import { and, desc, eq, inArray } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, users } from '../../server/platform/db/schema/index.ts';
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
    },
    { lockoutThreshold: 3 },
  );
});
afterAll(() => world.close());

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
    const message = (html: string) => /role="alert"[^>]*>([^<]+)</.exec(html)?.[1];
    expect(message(wrong.response.text)).toBe(message(unknown.response.text));
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
    expect(afterLock.response.text).toContain('locked');
    const actions = (await eventsFor(locked!.id)).map((event) => event.action);
    expect(actions).toContain('account.locked');
    expect(actions[0]).toBe('sign-in.refused-locked');
  });

  it('regenerates the session id at sign-in and the old id grants nothing', async () => {
    const { admin } = world.users;
    const agent = request.agent(world.app);
    const page = await agent.get('/signin');
    const before = sessionCookie(page);
    expect(before).toBeDefined();
    const response = await agent
      .post('/signin')
      .type('form')
      .send({ _csrf: csrfFrom(page.text), email: admin!.email, password: admin!.password });
    const after = sessionCookie(response);
    expect(after).toBeDefined();
    expect(after).not.toBe(before);
    const withOld = await request(world.app).get('/api/me').set('Cookie', before!);
    expect(withOld.status).toBe(401);
    const withNew = await request(world.app).get('/api/me').set('Cookie', after!);
    expect(withNew.status).toBe(200);
    expect(withNew.body.email).toBe(admin!.email);
  });

  it('sets the session cookie HttpOnly and SameSite', async () => {
    const page = await request(world.app).get('/signin');
    const header = (page.headers['set-cookie'] as unknown as string[])[0]!;
    expect(header).toMatch(/HttpOnly/i);
    expect(header).toMatch(/SameSite=Lax/i);
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
