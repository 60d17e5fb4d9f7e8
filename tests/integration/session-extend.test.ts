import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { touchSlackMs } from '../../server/platform/auth/session-store.ts';
import { createTestWorld, csrfFrom, sessionCookie, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * "Stay signed in" (issue 17, WCAG 2.2.1): `POST /api/session/extend` rewrites the session row's
 * expiry to a full idle timeout from now — even within the store's slack, where an ordinary
 * request leaves the row alone — so the person who extends at the warning is not signed out at
 * the old time. Signed-in only, CSRF-checked like every other API call. The app's clock (Date)
 * is moved by the test and the cookie is sent by hand, as in `session-idle.test.ts`.
 */

const IDLE_MS = 30 * 60_000;
const SLACK_MS = touchSlackMs(IDLE_MS);

let world: TestWorld;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] }, { signInRateLimit: 200 });
});
afterEach(() => {
  vi.useRealTimers();
});
afterAll(async () => {
  await world?.close();
});

interface Session {
  cookie: string;
  sid: string;
  /** The session's CSRF token, read from a page right after signing in. */
  token: string;
  /** App time of the sign-in: the row's first expiry less the timeout. */
  signedInAt: number;
}

async function signedIn(): Promise<Session> {
  const analyst = world.users.analyst!;
  const { agent, response } = await signIn(world.app, analyst.email, analyst.password);
  const cookie = sessionCookie(response)!;
  const value = decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1));
  const sid = value.slice(2, value.lastIndexOf('.'));
  const token = csrfFrom((await agent.get('/')).text);
  return { cookie, sid, token, signedInAt: (await expiryOf(sid))! - IDLE_MS };
}

/** The row's expiry in ms since the epoch, or null when the row is gone. */
async function expiryOf(sid: string): Promise<number | null> {
  const { rows } = await world.database.pool.query<{ expire: Date }>(
    'select expire::timestamptz as expire from "session" where sid = $1',
    [sid],
  );
  return rows[0]?.expire.getTime() ?? null;
}

function extendAt(session: Session, at: number, token: string | null = session.token) {
  vi.setSystemTime(at);
  const call = request(world.app).post('/api/session/extend').set('Cookie', session.cookie);
  return token === null ? call : call.set('x-csrf-token', token);
}

function meAt(session: Session, at: number) {
  vi.setSystemTime(at);
  return request(world.app).get('/api/me').set('Cookie', session.cookie);
}

describe('POST /api/session/extend', () => {
  it('rewrites the expiry to a full timeout from now, even within the slack where a read does not', async () => {
    const session = await signedIn();
    const written = (await expiryOf(session.sid))!;
    vi.useFakeTimers({ toFake: ['Date'] });
    // An ordinary request within the slack leaves the row's expiry where it was…
    expect((await meAt(session, session.signedInAt + 20_000)).status).toBe(200);
    expect(await expiryOf(session.sid)).toBe(written);
    // …the extension moves it.
    const at = session.signedInAt + SLACK_MS / 2;
    const extended = await extendAt(session, at);
    expect(extended.status).toBe(200);
    expect(extended.body).toEqual({ signOutInMs: IDLE_MS });
    expect(extended.headers['cache-control']).toBe('no-store');
    const moved = (await expiryOf(session.sid))!;
    expect(moved).toBeGreaterThan(written);
    expect(moved).toBeGreaterThanOrEqual(at + IDLE_MS);
    expect(moved).toBeLessThanOrEqual(at + IDLE_MS + 1_000);
    // The cookie rolls with it.
    const expires = /Expires=([^;]+)/.exec(String(extended.headers['set-cookie']))?.[1];
    expect(Date.parse(expires!)).toBeGreaterThanOrEqual(at + IDLE_MS - 1_000);
  });

  it('extended at the warning, the session outlives its old sign-out time; left idle, it then ends', async () => {
    const session = await signedIn();
    vi.useFakeTimers({ toFake: ['Date'] });
    // The last request: within the slack, so it left the expiry at the sign-in's.
    expect((await meAt(session, session.signedInAt + SLACK_MS - 2_000)).status).toBe(200);
    // At the warning, 28 minutes later, the person chooses "Stay signed in".
    const at = session.signedInAt + IDLE_MS - 2 * 60_000;
    expect((await extendAt(session, at)).status).toBe(200);
    // Past the old sign-out time: still signed in.
    expect((await meAt(session, session.signedInAt + IDLE_MS + 5 * 60_000)).status).toBe(200);
    // The session ends a timeout after the last request, as before.
    const last = session.signedInAt + IDLE_MS + 5 * 60_000;
    expect((await meAt(session, last + IDLE_MS + 1_000)).status).toBe(401);
  });

  it('cannot bring back a session that has already ended', async () => {
    const session = await signedIn();
    vi.useFakeTimers({ toFake: ['Date'] });
    // The ended session's CSRF token went with it, so the call is refused before the route.
    const refused = await extendAt(session, session.signedInAt + IDLE_MS + 1_000);
    expect(refused.status).toBe(403);
    // The expired row (until pruning) keeps its old expiry.
    expect(await expiryOf(session.sid)).toBe(session.signedInAt + IDLE_MS);
    expect((await meAt(session, session.signedInAt + IDLE_MS + 2_000)).status).toBe(401);
  });

  it('refuses an anonymous visitor (401), even with a valid anonymous CSRF token', async () => {
    const agent = request.agent(world.app);
    const token = csrfFrom((await agent.get('/signin')).text);
    const refused = await agent.post('/api/session/extend').set('x-csrf-token', token);
    expect(refused.status).toBe(401);
    expect(refused.body.error.message).toBe('Sign in first.');
    expect(sessionCookie(refused)).toBeUndefined();
  });

  it('needs the CSRF header: without it, or with a wrong token, 403 and the expiry stays', async () => {
    const session = await signedIn();
    const written = (await expiryOf(session.sid))!;
    vi.useFakeTimers({ toFake: ['Date'] });
    const withoutToken = await extendAt(session, session.signedInAt + 10_000, null);
    expect(withoutToken.status).toBe(403);
    const wrongToken = await extendAt(
      session,
      session.signedInAt + 20_000,
      `${session.token.slice(0, -2)}xx`,
    );
    expect(wrongToken.status).toBe(403);
    expect(await expiryOf(session.sid)).toBe(written);
    // The same call with the token is accepted.
    expect((await extendAt(session, session.signedInAt + 30_000)).status).toBe(200);
  });

  it('is found by GET as nothing (POST only)', async () => {
    const session = await signedIn();
    const response = await request(world.app).get('/api/session/extend').set('Cookie', session.cookie);
    expect(response.status).toBe(404);
  });
});
