import { and, desc, eq, like, sql } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SIGN_IN_REFUSED } from '../../server/platform/auth/accounts.ts';
import { auditEvents, rateLimitHits, users } from '../../server/platform/db/schema/index.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, csrfFrom, type TestWorld } from '../support/test-app.ts';

/**
 * A lock that strangers cannot turn against the owner (issue 14 §2). The app trusts the loopback
 * proxy here, so each request can come from the address its X-Forwarded-For names, as behind a
 * real proxy. A stranger who fails on purpose locks only their own address, cannot move the end
 * of the lock however often they go on, and triggers one message to the owner (with an unlock
 * link) and one to the administrators. The owner gets in from elsewhere at once; behind the
 * stranger's own address, through the link. Guessing spread over many addresses locks the
 * account for every new browser, but not for the owner's own.
 */

let world: TestWorld;
let smtp: TestSmtp;
const STRANGER = '203.0.113.9';
const OWNER_HOME = '198.51.100.20';
const NEW_PASSWORD = 'Copper-lantern-73-meadows';

beforeAll(async () => {
  world = await createTestWorld(
    { owner: ['analyst'], admin: ['admin'] },
    { lockoutThreshold: 3, signInRateLimit: 10_000, trustProxy: ['loopback'] },
  );
  smtp = await startTestSmtp(world.database.db);
});
afterAll(async () => {
  await smtp?.close();
  await world?.close();
});

type Agent = ReturnType<typeof request.agent>;
interface Client {
  agent: Agent;
  address: string;
}
const client = (address: string): Client => ({ agent: request.agent(world.app), address });

async function attempt(from: Client, password: string, email = world.users.owner!.email) {
  const page = await from.agent.get('/signin').set('X-Forwarded-For', from.address);
  return from.agent
    .post('/signin')
    .set('X-Forwarded-For', from.address)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), email, password });
}

async function signOut(from: Client) {
  const page = await from.agent.get('/').set('X-Forwarded-For', from.address);
  await from.agent
    .post('/signout')
    .type('form')
    .send({ _csrf: csrfFrom(page.text) });
}

const alertText = (html: string) => /role="alert"[^>]*>([^<]+)</.exec(html)?.[1];

async function ownerRow() {
  const [row] = await world.database.db.select().from(users).where(eq(users.id, world.users.owner!.id));
  return row!;
}

async function lockRow(address: string) {
  const [row] = await world.database.db
    .select()
    .from(rateLimitHits)
    .where(like(rateLimitHits.key, `%signin-pair:${world.users.owner!.id}:address:${address}`));
  return row;
}

async function eventsOf(action: string) {
  return world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.actorUserId, world.users.owner!.id), eq(auditEvents.action, action)))
    .orderBy(desc(auditEvents.id));
}

let ownerBrowser: Client;
let unlockToken: string;

describe('a stranger failing on purpose', () => {
  it('locks only their own address, and the owner and the administrators are told', async () => {
    const stranger = client(STRANGER);
    for (let failure = 0; failure < 3; failure += 1) {
      const response = await attempt(stranger, `guess-${failure}`);
      expect(response.status).toBe(401);
      expect(alertText(response.text)).toBe(SIGN_IN_REFUSED);
    }
    const owner = await ownerRow();
    expect(owner.lockedUntil).not.toBeNull();
    const [locked] = await eventsOf('account.locked');
    expect(locked?.afterValue).toMatchObject({ scope: 'address', client: STRANGER, afterFailures: 3 });

    const message = await smtp.waitForMailTo(owner.email);
    expect(message.subject).toBe('Sign-in to your Rateledger account was locked');
    expect(message.textBody).toContain(`from the address ${STRANGER}`);
    unlockToken = /\/password-reset\/([A-Za-z0-9_-]{43})/.exec(message.textBody)![1]!;
    const alert = await smtp.waitForMailTo(world.users.admin!.email);
    expect(alert.subject).toContain('account locked');
    expect(alert.textBody).toContain(owner.email);
    expect(alert.textBody).toContain(`/admin/people/${owner.id}`);
    // The link is recorded like an administrator's, by Rateledger itself.
    const [issued] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.action, 'password.reset-requested'), eq(auditEvents.recordId, String(owner.id))),
      );
    expect(issued?.actorLabel).toBe('Rateledger');
  });

  it('cannot extend the lock: refused attempts neither count nor move its end, and send no more mail', async () => {
    const stranger = client(STRANGER);
    const before = { owner: await ownerRow(), lock: await lockRow(STRANGER) };
    for (let attemptNumber = 0; attemptNumber < 6; attemptNumber += 1) {
      const response = await attempt(stranger, `more-guesses-${attemptNumber}`);
      expect(alertText(response.text)).toBe(SIGN_IN_REFUSED);
    }
    const after = { owner: await ownerRow(), lock: await lockRow(STRANGER) };
    expect(after.owner.lockedUntil).toEqual(before.owner.lockedUntil);
    expect(after.lock).toEqual(before.lock);
    expect(after.owner.failedSignInCount).toBe(before.owner.failedSignInCount);
    expect((await eventsOf('sign-in.refused-locked')).length).toBeGreaterThanOrEqual(6);
    expect(await smtp.mailTo(world.users.owner!.email)).toHaveLength(1);
    expect(await smtp.mailTo(world.users.admin!.email)).toHaveLength(1);
  });

  it('does not keep the owner out: from their own address they sign in at once', async () => {
    ownerBrowser = client(OWNER_HOME);
    const response = await attempt(ownerBrowser, world.users.owner!.password);
    expect(response.status).toBe(303);
    // The stranger's address stays locked, with the same end.
    const stranger = client(STRANGER);
    const lockEnd = (await lockRow(STRANGER))!.resetAt;
    expect(alertText((await attempt(stranger, 'after-owner')).text)).toBe(SIGN_IN_REFUSED);
    expect((await lockRow(STRANGER))!.resetAt).toEqual(lockEnd);
    expect((await ownerRow()).lockedUntil).toEqual(lockEnd);
    await signOut(ownerBrowser);
  });
});

describe('the owner behind the stranger’s address', () => {
  it('is refused like anyone there, and gets in through the link in the message', async () => {
    const sharedAddress = client(STRANGER);
    const refused = await attempt(sharedAddress, world.users.owner!.password);
    expect(refused.status).toBe(401);
    expect(alertText(refused.text)).toBe(SIGN_IN_REFUSED);

    const page = await sharedAddress.agent
      .get(`/password-reset/${unlockToken}`)
      .set('X-Forwarded-For', STRANGER);
    expect(page.status).toBe(200);
    const reset = await sharedAddress.agent
      .post(`/password-reset/${unlockToken}`)
      .set('X-Forwarded-For', STRANGER)
      .type('form')
      .send({ _csrf: csrfFrom(page.text), password: NEW_PASSWORD, confirmPassword: NEW_PASSWORD });
    expect(reset.status).toBe(200);
    expect((await ownerRow()).lockedUntil).toBeNull();
    world.users.owner!.password = NEW_PASSWORD;
    expect((await attempt(sharedAddress, NEW_PASSWORD)).status).toBe(303);
    expect((await eventsOf('password.reset'))[0]?.afterValue).toMatchObject({ lockedUntil: null });
  });
});

describe('guessing spread over many addresses', () => {
  it('locks the account for new browsers, never for the owner’s own, and is not extended either', async () => {
    // The owner's browser signed in before and holds the known-browser cookie.
    expect((await attempt(ownerBrowser, world.users.owner!.password)).status).toBe(303);
    await signOut(ownerBrowser);

    // Each address gives up after 3 failures (its own lock); the account counts them all.
    let accountLocked = false;
    for (let address = 1; address <= 6 && !accountLocked; address += 1) {
      const stranger = client(`192.0.2.${address}`);
      for (let failure = 0; failure < 3; failure += 1)
        await attempt(stranger, `spread-${address}-${failure}`);
      const [latest] = await eventsOf('account.locked');
      accountLocked = (latest?.afterValue as { scope?: string } | null)?.scope === 'account';
    }
    expect(accountLocked).toBe(true);
    const [accountLock] = await eventsOf('account.locked');
    expect(accountLock?.afterValue).toMatchObject({ scope: 'account' });
    const lockedUntil = (await ownerRow()).lockedUntil;

    // A browser the owner never used is refused from an address nobody failed from…
    const newBrowser = client('198.51.100.99');
    expect(alertText((await attempt(newBrowser, world.users.owner!.password)).text)).toBe(SIGN_IN_REFUSED);
    // …further strangers do not move the end…
    await attempt(client('192.0.2.200'), 'one-more-guess');
    expect((await ownerRow()).lockedUntil).toEqual(lockedUntil);
    // …and the owner's own browser, from anywhere, still signs in.
    ownerBrowser.address = '198.51.100.77';
    expect((await attempt(ownerBrowser, world.users.owner!.password)).status).toBe(303);
    await signOut(ownerBrowser);
  });

  it('a forged known-browser cookie counts for nothing', async () => {
    const forger = client('198.51.100.98');
    const forged = `${world.users.owner!.id}.${'A'.repeat(22)}.${'B'.repeat(43)}`;
    const page = await request(world.app).get('/signin').set('X-Forwarded-For', forger.address);
    const formCookie = (page.headers['set-cookie'] as unknown as string[])[0]!.split(';')[0]!;
    const response = await request(world.app)
      .post('/signin')
      .set('X-Forwarded-For', forger.address)
      .set('Cookie', `${formCookie}; rateledger.browser=${forged}`)
      .type('form')
      .send({
        _csrf: csrfFrom(page.text),
        email: world.users.owner!.email,
        password: world.users.owner!.password,
      });
    expect(response.status).toBe(401);
  });
});

describe('an administrator’s unlock', () => {
  it('lifts every lock of the account at once, and a later lock does not bring lifted ones back', async () => {
    const owner = world.users.owner!;
    const admin = client('198.51.100.5');
    expect((await attempt(admin, world.users.admin!.password, world.users.admin!.email)).status).toBe(303);
    const person = await admin.agent.get(`/admin/people/${owner.id}`);
    expect(person.text).toContain('Locked until');
    const unlocked = await admin.agent
      .post(`/admin/people/${owner.id}/unlock`)
      .type('form')
      .send({ _csrf: csrfFrom(person.text) });
    expect(unlocked.status).toBe(303);
    // The account-wide lock's row outlives the unlock but no longer counts: a new browser gets in.
    expect((await attempt(client('198.51.100.99'), owner.password)).status).toBe(303);
    // A new lock of one address afterwards does not bring the lifted account lock back.
    const stranger = client('203.0.113.77');
    for (let failure = 0; failure < 3; failure += 1) await attempt(stranger, `again-${failure}`);
    expect((await ownerRow()).lockedUntil).not.toBeNull();
    expect((await attempt(client('198.51.100.97'), owner.password)).status).toBe(303);
    const { rows } = await world.database.db.execute<{ locks: number }>(
      sql`select count(*)::int as locks from rate_limit_hits
           where key like ${`%signin-account:${owner.id}`} and hits >= 9`,
    );
    expect(rows[0]!.locks).toBe(0);
  });
});
