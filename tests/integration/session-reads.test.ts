import { and, eq } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { memberships } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, sessionCookie, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * What a signed-in request reads (issue 16): with the session store's one statement (session row,
 * user and roles together, `session-store.ts`) and with connect-pg-simple's three, a role change
 * and a deactivation take effect at the person's next request, and a session that names nobody
 * valid is simply not signed in. The fast path costs one statement per signed-in read.
 */

type Agent = Awaited<ReturnType<typeof signIn>>['agent'];

/** The SQL text of every statement the app's pool runs while `run` does. */
async function statementsDuring(world: TestWorld, run: () => Promise<unknown>): Promise<string[]> {
  const spy = vi.spyOn(world.database.pool, 'query');
  try {
    await run();
    return spy.mock.calls.map(([query]) =>
      typeof query === 'string' ? query : (query as { text: string }).text,
    );
  } finally {
    spy.mockRestore();
  }
}

/** The session id inside the signed `rateledger.sid` cookie (`s:<id>.<signature>`). */
function sidOf(cookie: string): string {
  const value = decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1));
  return value.slice(2, value.lastIndexOf('.'));
}

describe.each([
  { name: 'one statement per request (session store)', sessionFastPath: true, statements: 1 },
  { name: 'connect-pg-simple and passport alone', sessionFastPath: false, statements: 3 },
])('signed-in reads: $name', ({ sessionFastPath, statements }) => {
  let world: TestWorld;
  let admin: Agent;
  let adminToken: string;

  beforeAll(async () => {
    world = await createTestWorld(
      { admin: ['admin'], analyst: ['analyst'], leaver: ['reviewer'], tampered: ['analyst'] },
      { sessionFastPath, signInRateLimit: 200 },
    );
    admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
    adminToken = csrfFrom((await admin.get('/admin/people')).text);
  });
  afterAll(async () => {
    await world?.close();
  });

  const post = (path: string, fields: Record<string, string | string[]> = {}) =>
    admin
      .post(path)
      .type('form')
      .send({ _csrf: adminToken, ...fields });

  it(`a signed-in read costs ${statements} database statement(s)`, async () => {
    const analyst = world.users.analyst!;
    const { agent } = await signIn(world.app, analyst.email, analyst.password);
    let status = 0;
    const ran = await statementsDuring(world, async () => {
      status = (await agent.get('/api/me')).status;
    });
    expect(status).toBe(200);
    expect(ran).toHaveLength(statements);
  });

  it('a role given or taken away applies from the next request on', async () => {
    const analyst = world.users.analyst!;
    const { agent } = await signIn(world.app, analyst.email, analyst.password);
    expect((await agent.get('/api/me')).body.roles).toEqual(['analyst']);
    expect((await agent.get('/api/admin/settings')).status).toBe(403);

    expect((await post(`/admin/people/${analyst.id}/roles`, { roles: ['analyst', 'admin'] })).status).toBe(
      303,
    );
    expect((await agent.get('/api/me')).body.roles).toEqual(['analyst', 'admin']);
    expect((await agent.get('/api/admin/settings')).status).toBe(200);

    expect((await post(`/admin/people/${analyst.id}/roles`, { roles: 'analyst' })).status).toBe(303);
    expect((await agent.get('/api/me')).body.roles).toEqual(['analyst']);
    expect((await agent.get('/api/admin/settings')).status).toBe(403);
  });

  it('a deactivated person is signed out at the next request, and the session forgets them at once', async () => {
    const leaver = world.users.leaver!;
    const { agent, response } = await signIn(world.app, leaver.email, leaver.password);
    const sid = sidOf(sessionCookie(response)!);
    expect((await agent.get('/api/me')).status).toBe(200);

    expect((await post(`/admin/people/${leaver.id}/deactivate`)).status).toBe(303);
    expect((await agent.get('/api/me')).status).toBe(401);
    const page = await agent.get('/studies');
    expect(page.status).toBe(303);
    expect(page.headers.location).toMatch(/^\/signin/);
    // Changed session data is written at once, however recently the row was touched.
    const { rows } = await world.database.pool.query<{ sess: { passport?: { user?: unknown } } }>(
      'select sess from "session" where sid = $1',
      [sid],
    );
    expect(rows[0]?.sess.passport?.user).toBeUndefined();

    // Reactivated, the old session stays signed out: the person signs in again.
    expect((await post(`/admin/people/${leaver.id}/reactivate`)).status).toBe(303);
    expect((await agent.get('/api/me')).status).toBe(401);
    expect((await signIn(world.app, leaver.email, leaver.password)).response.status).toBe(303);
  });

  it('a person with no role left in the organisation is signed out at the next request', async () => {
    const tampered = world.users.tampered!;
    const { agent } = await signIn(world.app, tampered.email, tampered.password);
    expect((await agent.get('/api/me')).status).toBe(200);
    await world.database.db
      .delete(memberships)
      .where(and(eq(memberships.userId, tampered.id), eq(memberships.organisationId, world.organisationId)));
    try {
      expect((await agent.get('/api/me')).status).toBe(401);
    } finally {
      await world.database.db
        .insert(memberships)
        .values({ userId: tampered.id, organisationId: world.organisationId, role: 'analyst' });
    }
  });

  // connect-pg-simple and passport alone hand such a value to the user query, which fails (500);
  // only the server writes session rows, so this is a check of the one statement's casts.
  it.runIf(sessionFastPath)(
    'a session row whose reference is not an id signs nobody in and breaks nothing',
    async () => {
      const tampered = world.users.tampered!;
      const { response } = await signIn(world.app, tampered.email, tampered.password);
      const cookie = sessionCookie(response)!;
      for (const value of ['"1 or true"', '-1', '1e3', '99999999999', 'null', '{"id": 1}']) {
        await world.database.pool.query(
          `update "session"
         set sess = jsonb_set(sess::jsonb, '{passport}', jsonb_build_object('user',
           jsonb_build_object('userId', $2::jsonb, 'organisationId', $3::integer)))::json
         where sid = $1`,
          [sidOf(cookie), value, world.organisationId],
        );
        const me = await request(world.app).get('/api/me').set('Cookie', cookie);
        expect({ value, status: me.status }).toEqual({ value, status: 401 });
      }
    },
  );

  it('another organisation’s id in the session row signs nobody in', async () => {
    const analyst = world.users.analyst!;
    const { response } = await signIn(world.app, analyst.email, analyst.password);
    const cookie = sessionCookie(response)!;
    await world.database.pool.query(
      `update "session" set sess = jsonb_set(sess::jsonb, '{passport,user,organisationId}', $2::jsonb)::json where sid = $1`,
      [sidOf(cookie), String(world.organisationId + 1_000_000)],
    );
    expect((await request(world.app).get('/api/me').set('Cookie', cookie)).status).toBe(401);
  });
});
