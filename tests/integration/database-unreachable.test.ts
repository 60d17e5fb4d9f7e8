import { execFileSync } from 'node:child_process';
import { chmodSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app.ts';
import { projectPath } from '../../server/platform/config/project-root.ts';
import { openDatabase } from '../../server/platform/db/client.ts';
import { applyMigrations } from '../../server/platform/db/migrate.ts';
import { routeInventory } from '../support/route-inventory.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * When PostgreSQL is away (issue 14 §4): the app runs against a throwaway cluster of its own,
 * which the test stops (`pg_ctl stop -m fast`: open connections are terminated, new ones
 * refused) and starts again. While it is down every page answers a plain 503 page and every API
 * call a 503 JSON error, with Retry-After, never a 500; once it is back the same app and the same
 * session work again, without a restart. The shared test cluster is never touched.
 */

const PLAIN = 'The database is not reachable. Try again in a minute';
const LINK_TOKEN = 'A'.repeat(43);

let dir: string;
let port: number;
let world: TestWorld;
let agent: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

function cluster(step: string) {
  execFileSync('bash', ['-c', `source scripts/lib.sh; ${step}`], { cwd: projectPath(), stdio: 'pipe' });
}
const startCluster = () => cluster(`start_cluster '${dir}' ${port} throwaway`);
const stopCluster = () => cluster(`stop_cluster '${dir}'`);

async function freePort(): Promise<number> {
  const server = createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port: chosen } = server.address() as { port: number };
  await new Promise((resolve) => server.close(resolve));
  return chosen;
}

beforeAll(async () => {
  dir = mkdtempSync('/var/tmp/rateledger-outage-pg.');
  chmodSync(dir, 0o755);
  port = await freePort();
  startCluster();
  cluster(`ensure_database ${port} rateledger_outage`);
  const url = `postgres://postgres@127.0.0.1:${port}/rateledger_outage`;
  await applyMigrations(url);
  world = await createTestWorld({ admin: ['admin'] }, { databaseUrl: url });
  agent = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await agent.get('/admin/people')).text);
}, 120_000);

afterAll(async () => {
  await world?.close();
  if (dir) {
    stopCluster();
    rmSync(dir, { recursive: true, force: true });
  }
});

/** A concrete path for a route pattern: every parameter gets a value of the right shape. */
const concrete = (path: string) =>
  path
    .split(',')[0]!
    .replace(/\{\*\w+\}/g, 'anything')
    .replace(/:(\w+)/g, (_match, name: string) => (/token/i.test(name) ? LINK_TOKEN : '1'));

describe('while the database is stopped', () => {
  it('pages answer a plain 503 page and the API a 503 JSON error, never a 500', async () => {
    expect((await agent.get('/').set('Accept', 'text/html')).status).toBe(200);
    stopCluster();

    const page = await agent.get('/').set('Accept', 'text/html');
    expect(page.status).toBe(503);
    expect(page.headers['content-type']).toMatch(/text\/html/);
    expect(page.headers['retry-after']).toBe('60');
    expect(page.text).toContain(PLAIN);
    expect(page.text).toContain('The database is not reachable</h1>');

    const api = await agent.get('/api/me');
    expect(api.status).toBe(503);
    expect(api.headers['retry-after']).toBe('60');
    expect(api.body).toEqual({ error: { status: 503, message: expect.stringContaining(PLAIN) } });

    const health = await request(world.app).get('/healthz');
    expect(health.status).toBe(503);

    // The sign-in page itself needs no database; signing in does, and says so.
    const signInPage = request.agent(world.app);
    const form = await signInPage.get('/signin');
    expect(form.status).toBe(200);
    const attempt = await signInPage
      .post('/signin')
      .type('form')
      .set('Accept', 'text/html')
      .send({ _csrf: csrfFrom(form.text), email: world.users.admin!.email, password: 'whatever' });
    expect(attempt.status).toBe(503);
    expect(attempt.text).toContain(PLAIN);
  });

  it('every route, signed in or anonymous, answers without a 500 (503 where it needs the database)', async () => {
    const statuses: string[] = [];
    const anonymous = request.agent(world.app);
    const anonymousToken = csrfFrom((await anonymous.get('/signin')).text);
    for (const route of routeInventory(world.app)) {
      for (const method of route.methods.filter((name) => name !== '_all')) {
        const path = concrete(route.path);
        const send = (client: typeof agent, csrf: string) => {
          const call = (client as unknown as Record<string, (url: string) => request.Test>)[method]!(path)
            .set('Accept', path.startsWith('/api/') ? 'application/json' : 'text/html')
            .set('x-csrf-token', csrf);
          return method === 'get' || method === 'head' ? call : call.send({});
        };
        const signedIn = await send(agent, token);
        const anonymousAnswer = await send(anonymous, anonymousToken);
        statuses.push(`${method.toUpperCase()} ${route.path}: ${signedIn.status}/${anonymousAnswer.status}`);
        expect.soft(signedIn.status, `${method} ${path} signed in`).toBe(503);
        expect.soft(anonymousAnswer.status, `${method} ${path} anonymous`).not.toBe(500);
        if (anonymousAnswer.status >= 500)
          expect.soft(anonymousAnswer.status, `${method} ${path} anonymous`).toBe(503);
      }
    }
    expect(statuses.length).toBeGreaterThan(40);
  });
});

describe('when the database is back', () => {
  it('the same app and the same session work again, without a restart', async () => {
    startCluster();
    await expect
      .poll(async () => (await agent.get('/api/me')).status, { timeout: 15_000, interval: 250 })
      .toBe(200);
    expect((await agent.get('/api/me')).body.email).toBe(world.users.admin!.email);
    expect((await agent.get('/').set('Accept', 'text/html')).status).toBe(200);
    expect((await request(world.app).get('/healthz')).status).toBe(200);
  });
});

describe('an app whose database was never reachable', () => {
  it('answers 503 where the database is needed', async () => {
    const database = openDatabase(`postgres://postgres@127.0.0.1:${await freePort()}/nowhere`);
    try {
      const app = createApp(database, { sessionSecret: 'test-secret-for-this-file-only' });
      const anonymous = request.agent(app);
      const form = await anonymous.get('/signin');
      expect(form.status).toBe(200);
      const attempt = await anonymous
        .post('/signin')
        .type('form')
        .send({ _csrf: csrfFrom(form.text), email: 'someone@test.example', password: 'whatever' });
      expect(attempt.status).toBe(503);
      expect((await request(app).get(`/invitations/${LINK_TOKEN}`)).status).toBe(503);
    } finally {
      await database.close();
    }
  });
});
