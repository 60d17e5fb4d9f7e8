import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { touchSlackMs } from '../../server/platform/auth/session-store.ts';
import { createTestWorld, sessionCookie, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * The idle sign-out (EU GMP Annex 11 §12.1) with the session row rewritten at most once per
 * slack (issue 16, `session-store.ts`): a request within `min(60 s, timeout / 10)` of the row's
 * last write leaves it alone; the session still ends once the timeout has passed without a
 * request — at most the slack early, never late. The app's clock (Date) is moved by the test;
 * the session cookie is sent by hand so that no client-side cookie expiry decides for the server.
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
}

async function signedIn(): Promise<Session> {
  const analyst = world.users.analyst!;
  const { response } = await signIn(world.app, analyst.email, analyst.password);
  const cookie = sessionCookie(response)!;
  const value = decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1));
  return { cookie, sid: value.slice(2, value.lastIndexOf('.')) };
}

/** The row's expiry in ms since the epoch, or null when the row is gone. */
async function expiryOf(session: Session): Promise<number | null> {
  const { rows } = await world.database.pool.query<{ expire: Date }>(
    'select expire::timestamptz as expire from "session" where sid = $1',
    [session.sid],
  );
  return rows[0]?.expire.getTime() ?? null;
}

/** `GET /api/me` at app time `at`; the status and the session writes (UPDATE or INSERT) it made. */
async function readAt(session: Session, at: number) {
  vi.setSystemTime(at);
  const spy = vi.spyOn(world.database.pool, 'query');
  try {
    const response = await request(world.app).get('/api/me').set('Cookie', session.cookie);
    const writes = spy.mock.calls
      .map(([query]) => (typeof query === 'string' ? query : (query as { text: string }).text))
      .filter((text) => /^\s*(update|insert into)\s+"session"/i.test(text));
    return { status: response.status, writes: writes.length, setCookie: response.headers['set-cookie'] };
  } finally {
    spy.mockRestore();
  }
}

describe('the session row is rewritten at most once per slack', () => {
  it('the slack is min(60 s, timeout / 10)', () => {
    expect(touchSlackMs(30 * 60_000)).toBe(60_000);
    expect(touchSlackMs(5 * 60_000)).toBe(30_000);
  });

  it('a read within the slack of the last write leaves the row alone; one past it moves the expiry', async () => {
    const session = await signedIn();
    const written = (await expiryOf(session))!;
    const signedInAt = written - IDLE_MS;
    vi.useFakeTimers({ toFake: ['Date'] });

    for (const after of [1_000, 30_000, SLACK_MS - 2_000]) {
      const read = await readAt(session, signedInAt + after);
      expect({ after, status: read.status, writes: read.writes }).toEqual({ after, status: 200, writes: 0 });
      // The cookie still rolls: the browser keeps it for the full timeout from now.
      const expires = /Expires=([^;]+)/.exec(String(read.setCookie))?.[1];
      expect(Date.parse(expires!)).toBeGreaterThanOrEqual(signedInAt + after + IDLE_MS - 1_000);
    }
    expect(await expiryOf(session)).toBe(written);

    const late = signedInAt + SLACK_MS + 1_000;
    const read = await readAt(session, late);
    expect({ status: read.status, writes: read.writes }).toEqual({ status: 200, writes: 1 });
    const moved = (await expiryOf(session))!;
    expect(moved).toBeGreaterThanOrEqual(late + IDLE_MS);
    expect(moved).toBeLessThanOrEqual(late + IDLE_MS + 1_000);
  });
});

describe('the idle sign-out', () => {
  it('a session idle for the timeout is signed out, however recently its row was skipped', async () => {
    const session = await signedIn();
    const signedInAt = (await expiryOf(session))! - IDLE_MS;
    vi.useFakeTimers({ toFake: ['Date'] });
    // The last request falls within the slack, so it does not move the expiry.
    const last = signedInAt + SLACK_MS - 2_000;
    expect(await readAt(session, last)).toMatchObject({ status: 200, writes: 0 });

    const refused = await readAt(session, last + IDLE_MS + 1_000);
    expect(refused.status).toBe(401);
    // Signed out for good: the same cookie an instant later is still refused, pages redirect.
    vi.setSystemTime(last + IDLE_MS + 2_000);
    const page = await request(world.app).get('/studies').set('Cookie', session.cookie);
    expect(page.status).toBe(303);
    expect(page.headers.location).toMatch(/^\/signin/);
  });

  it('a session is kept until the timeout less the slack after its last request', async () => {
    const session = await signedIn();
    const signedInAt = (await expiryOf(session))! - IDLE_MS;
    vi.useFakeTimers({ toFake: ['Date'] });
    const last = signedInAt + SLACK_MS - 2_000;
    expect(await readAt(session, last)).toMatchObject({ status: 200, writes: 0 });

    // Idle for the timeout less the slack (and a second of rounding): still signed in, and this
    // request, well past the slack, moves the expiry.
    const kept = await readAt(session, last + IDLE_MS - SLACK_MS - 1_000);
    expect(kept).toMatchObject({ status: 200, writes: 1 });
  });

  it('a session that has a request every 50 s stays signed in past the timeout', async () => {
    const session = await signedIn();
    const signedInAt = (await expiryOf(session))! - IDLE_MS;
    vi.useFakeTimers({ toFake: ['Date'] });
    let writes = 0;
    let at = signedInAt;
    while (at < signedInAt + 2 * IDLE_MS) {
      at += 50_000;
      const read = await readAt(session, at);
      expect({ at: at - signedInAt, status: read.status }).toEqual({ at: at - signedInAt, status: 200 });
      writes += read.writes;
    }
    // 72 reads over an hour; at most one write per slack of them.
    expect(writes).toBeGreaterThan(0);
    expect(writes).toBeLessThanOrEqual(Math.ceil((2 * IDLE_MS) / SLACK_MS));
    expect(writes).toBeLessThan(72);
  });
});
