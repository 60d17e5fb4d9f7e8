import { and, eq, lt, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  type ChainCheckWorker,
  startChainCheckWorker,
} from '../../server/features/audit-viewer/chain-check-worker.ts';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { auditChainChecks, auditEvents } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 14 §1: the chain check "runs as a background job with progress for large trails". A
 * trail above AUDIT_CHECK_IN_REQUEST_MAX_EVENTS is checked by the `audit-chain-check` pg-boss
 * queue (created by the migration step, as the render queues are), its progress kept in
 * `audit_chain_checks` and shown on the page, its outcome recorded exactly as a check in the
 * request records it. Here the limit is set to 0, so this test database's trail counts as large.
 */

let world: TestWorld;
let other: TestWorld;
let worker: ChainCheckWorker | null = null;
const saved = { ...process.env };
const settings = { inRequestMaxEvents: 0, progressEvery: 20 };

beforeAll(async () => {
  process.env.AUDIT_CHECK_IN_REQUEST_MAX_EVENTS = String(settings.inRequestMaxEvents);
  world = await createTestWorld({ reviewer: ['reviewer'], admin: ['admin'] });
  other = await createTestWorld({ reviewer: ['reviewer'] });
  // Enough events that the check writes its progress several times on the way.
  for (let index = 0; index < 4 * settings.progressEvery; index += 1)
    await appendAuditEvent(world.database.db, {
      organisationId: world.organisationId,
      actorUserId: world.users.admin!.id,
      actorLabel: world.users.admin!.email,
      action: 'test.filler',
      after: { index },
      context: { test: 'chain-check-job' },
    });
});
afterAll(async () => {
  process.env = saved;
  await worker?.close();
  await other?.close();
  await world?.close();
});

const signInAs = (target: TestWorld, who: string) =>
  signIn(target.app, target.users[who]!.email, target.users[who]!.password);

async function requestCheck(agent: Awaited<ReturnType<typeof signIn>>['agent']) {
  const form = await agent.get('/audit/chain');
  const run = await agent
    .post('/audit/chain')
    .type('form')
    .send({ _csrf: csrfFrom(form.text) });
  expect(run.status).toBe(303);
  const location = run.headers.location ?? '';
  expect(location).toMatch(/^\/audit\/chain\?run=\d+$/);
  return { location, checkId: Number(/run=(\d+)/.exec(location)![1]) };
}

describe('a chain check of a large trail', () => {
  it('is queued, shows its progress while waiting, then runs in the worker and records the same outcome as a check in the request', async () => {
    const { agent } = await signInAs(world, 'reviewer');
    const { location, checkId } = await requestCheck(agent);

    // No worker yet: the check waits, and the page says so and reloads itself.
    const waiting = await agent.get(location);
    expect(waiting.status).toBe(200);
    expect(waiting.headers.refresh).toBe('3');
    expect(waiting.text).toContain('The check is waiting to start');
    const [queued] = await world.database.db
      .select()
      .from(auditChainChecks)
      .where(eq(auditChainChecks.id, checkId));
    expect(queued).toMatchObject({
      status: 'queued',
      organisationId: world.organisationId,
      eventsScanned: 0,
    });
    const [{ newest }] = (
      await world.database.db.execute<{ newest: string }>(sql`select max(id) as newest from audit_events`)
    ).rows as [{ newest: string }];
    expect(queued!.eventsExpected).toBeGreaterThan(settings.progressEvery);
    expect(queued!.eventsExpected).toBeLessThanOrEqual(Number(newest));

    // Another organisation cannot see it.
    const stranger = (await signInAs(other, 'reviewer')).agent;
    expect((await stranger.get(location)).status).toBe(404);

    worker = await startChainCheckWorker({
      db: world.database.db,
      connectionString: process.env.DATABASE_URL!,
      settings,
      pollingIntervalSeconds: 0.5,
    });
    let finished = await agent.get(location);
    for (let attempt = 0; finished.status !== 303 && attempt < 120; attempt += 1) {
      await new Promise((resolve) => setTimeout(resolve, 250));
      finished = await agent.get(location);
    }
    expect(finished.status, finished.text.slice(0, 400)).toBe(303);
    const eventId = Number(/check=(\d+)/.exec(finished.headers.location ?? '')?.[1]);
    const result = await agent.get(finished.headers.location!);
    expect(result.text).toContain('The chain is intact');

    const [row] = await world.database.db
      .select()
      .from(auditChainChecks)
      .where(eq(auditChainChecks.id, checkId));
    expect(row).toMatchObject({ status: 'done', outcomeEventId: eventId, failure: null });
    // Progress was written while it ran (every 20 events), and the whole chain was read.
    expect(row!.progressAt).not.toBeNull();
    expect(row!.eventsScanned).toBeGreaterThanOrEqual(row!.eventsExpected);

    const [recorded] = await world.database.db.select().from(auditEvents).where(eq(auditEvents.id, eventId));
    expect(recorded).toMatchObject({
      action: 'audit.chain-checked',
      organisationId: world.organisationId,
      actorUserId: world.users.reviewer!.id,
      actorLabel: world.users.reviewer!.email,
    });
    const own = await world.database.db
      .select({ id: auditEvents.id })
      .from(auditEvents)
      .where(and(eq(auditEvents.organisationId, world.organisationId), lt(auditEvents.id, eventId)));
    expect(recorded!.afterValue).toMatchObject({ ok: true, eventsChecked: own.length, findings: [] });
    // The request's context travelled with the job.
    expect(recorded!.context).toMatchObject({ ip: expect.stringContaining('127.0.0.1') });
  });

  it('a check in progress shows how many events were read, as a number and a progress bar', async () => {
    const { agent } = await signInAs(world, 'admin');
    const [running] = await world.database.db
      .insert(auditChainChecks)
      .values({
        organisationId: world.organisationId,
        requestedBy: world.users.admin!.id,
        status: 'running',
        eventsExpected: 120_000,
        eventsScanned: 30_000,
        context: {},
      })
      .returning();
    const page = await agent.get(`/audit/chain?run=${running!.id}`);
    expect(page.status).toBe(200);
    expect(page.headers.refresh).toBe('3');
    expect(page.text).toContain('Checking the chain…');
    expect(page.text).toContain('30000 of about 120000 events read (25 %)');
    expect(page.text).toMatch(/<progress[^>]*max="100" value="25"/);
  });

  it('a check that failed says so and stops reloading', async () => {
    const { agent } = await signInAs(world, 'admin');
    const [failed] = await world.database.db
      .insert(auditChainChecks)
      .values({
        organisationId: world.organisationId,
        requestedBy: world.users.admin!.id,
        status: 'failed',
        eventsExpected: 10,
        failure: 'the database connection was lost',
        context: {},
      })
      .returning();
    const page = await agent.get(`/audit/chain?run=${failed!.id}`);
    expect(page.status).toBe(200);
    expect(page.headers.refresh).toBeUndefined();
    expect(page.text).toContain('The check could not finish');
    expect(page.text).toContain('the database connection was lost');
  });
});
