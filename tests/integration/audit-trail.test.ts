import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appendAuditEvent, verifyAuditChain } from '../../server/platform/audit/audit-trail.ts';
import type { DatabaseHandle } from '../../server/platform/db/client.ts';
import { openSuperuserDatabase } from '../support/superuser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
/** The triggers are tested against the most powerful role (the app role has no such privileges at all). */
let superuser: DatabaseHandle;
beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  superuser = await openSuperuserDatabase();
});
afterAll(async () => {
  await superuser.close();
  await world.close();
});

const append = (action: string, after: unknown) =>
  appendAuditEvent(world.database.db, {
    organisationId: world.organisationId,
    actorLabel: 'test',
    action,
    after,
  });

describe('audit_events is append-only in the database', () => {
  it('rejects UPDATE, DELETE and TRUNCATE by trigger, whatever the application does', async () => {
    const { id } = await append('test.event', { value: 1 });
    await expect(
      superuser.pool.query('update audit_events set action = $1 where id = $2', ['edited', id]),
    ).rejects.toThrow(/append-only/);
    await expect(superuser.pool.query('delete from audit_events where id = $1', [id])).rejects.toThrow(
      /append-only/,
    );
    await expect(superuser.pool.query('truncate audit_events')).rejects.toThrow(/append-only/);
    const still = await world.database.pool.query('select action from audit_events where id = $1', [id]);
    expect(still.rows[0]?.action).toBe('test.event');
  });
});

describe('the hash chain', () => {
  it('verifies over every event, each linked to its predecessor', async () => {
    await append('test.first', { nested: { b: 2, a: [1, 'x'] } });
    await append('test.second', null);
    const check = await verifyAuditChain(world.database.db);
    expect(check.ok).toBe(true);
    expect(check.eventsChecked).toBeGreaterThanOrEqual(3);
  });

  it('stays intact under concurrent appends', async () => {
    await Promise.all(Array.from({ length: 12 }, (_, index) => append('test.concurrent', { index })));
    expect((await verifyAuditChain(world.database.db)).ok).toBe(true);
  });

  it('detects a row altered behind the trigger and names it as the first broken link', async () => {
    const { id } = await append('test.target', { amount: 10 });
    await append('test.after-target', { amount: 11 });
    // A superuser can bypass triggers; simulate that inside a transaction rolled back afterwards.
    let check: Awaited<ReturnType<typeof verifyAuditChain>> | undefined;
    await superuser.db
      .transaction(async (tx) => {
        await tx.execute(sql`set local session_replication_role = replica`);
        await tx.execute(sql`update audit_events set after_value = '{"amount": 99}'::jsonb where id = ${id}`);
        check = await verifyAuditChain(tx);
        tx.rollback();
      })
      .catch(() => undefined); // drizzle signals the rollback by throwing
    expect(check?.ok).toBe(false);
    expect(check?.firstBrokenLink).toEqual({ id, reason: 'content does not match its stored hash' });
    const afterRollback = await verifyAuditChain(world.database.db);
    expect(afterRollback.ok).toBe(true);
  });
});
