import { chmodSync, cpSync, mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type AuditAnchor, openAuditAnchor } from '../../server/platform/audit/audit-anchor.ts';
import { auditEventHash } from '../../server/platform/audit/audit-hash.ts';
import { appendAuditEvent, verifyAuditChain } from '../../server/platform/audit/audit-trail.ts';
import { checkAuditTrail, type TrailCheck } from '../../server/platform/audit/audit-trail-check.ts';
import { organisationChainResult } from '../../server/platform/audit/organisation-chain-result.ts';
import { TIMESTAMP_FORMAT } from '../../server/platform/audit/stored-audit-events.ts';
import type { DatabaseHandle, Transaction } from '../../server/platform/db/client.ts';
import { openSuperuserDatabase } from '../support/superuser.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

/**
 * The attacks of issue 14 §1, made as a database superuser inside transactions that are rolled
 * back afterwards (so the shared test trail stays intact): the in-database chain check alone
 * says "intact" after each of them; the check against the checkpoints kept outside the database
 * names each one.
 */

let world: TestWorld;
let second: TestWorld;
let superuser: DatabaseHandle;
let anchor: AuditAnchor;
let folder: string;

const append = (organisationId: number, action: string, after: unknown = null) =>
  appendAuditEvent(world.database.db, { organisationId, actorLabel: 'anchor-test', action, after });

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'] });
  second = await createTestWorld({ admin: ['admin'] });
  superuser = await openSuperuserDatabase();
  folder = mkdtempSync(path.join(tmpdir(), 'rateledger-anchor-test-'));
  anchor = openAuditAnchor(path.join(folder, 'anchor'));
});
afterAll(async () => {
  await superuser.close();
  await second.close();
  await world.close();
});

/** Runs `attack` as the superuser in a transaction, checks inside it, then rolls everything back. */
async function underAttack(attack: (tx: Transaction) => Promise<void>) {
  let inDatabase: Awaited<ReturnType<typeof verifyAuditChain>> | undefined;
  let outside: TrailCheck | undefined;
  await superuser.db
    .transaction(async (tx) => {
      await attack(tx);
      inDatabase = await verifyAuditChain(tx);
      outside = await checkAuditTrail(tx, anchor);
      tx.rollback();
    })
    .catch((error: Error) => {
      if (!/rollback/i.test(error.message)) throw error;
    });
  return { inDatabase: inDatabase!, outside: outside! };
}

/** What a careful attacker does after changing an event: recompute every later hash and link. */
async function recomputeFrom(tx: Transaction, fromId: number) {
  const rows = await tx.execute<Record<string, unknown> & { id: string; occurred_at: string }>(
    sql.raw(`select id, to_char(occurred_at at time zone 'UTC', ${TIMESTAMP_FORMAT}) as occurred_at, organisation_id,
      actor_user_id, actor_label, action, record_type, record_id, before_value, after_value, context
      from audit_events where id >= ${fromId} order by id`),
  );
  const before = await tx.execute<{ hash: string }>(
    sql`select hash from audit_events where id < ${fromId} order by id desc limit 1`,
  );
  let previousHash = before.rows[0]!.hash;
  for (const row of rows.rows) {
    const hash = auditEventHash({
      previousHash,
      occurredAt: row.occurred_at,
      organisationId: row.organisation_id as number | null,
      actorUserId: row.actor_user_id as number | null,
      actorLabel: row.actor_label as string,
      action: row.action as string,
      recordType: row.record_type as string | null,
      recordId: row.record_id as string | null,
      beforeValue: row.before_value,
      afterValue: row.after_value,
      context: row.context,
    });
    await tx.execute(
      sql`update audit_events set previous_hash = ${previousHash}, hash = ${hash} where id = ${Number(row.id)}`,
    );
    previousHash = hash;
  }
}

describe('checkpoints outside the database', () => {
  it('are signed with a key and logged in files no other account may read (mode 0600, folder 0700)', async () => {
    await append(world.organisationId, 'test.anchored', { n: 1 });
    const checkpoint = await anchor.checkpoint(world.database.db);
    expect(checkpoint).toMatchObject({ format: 1, keyId: expect.stringMatching(/^[0-9a-f]{16}$/) });
    const files = ['anchor', `anchor/anchor-signing-key.pem`, `anchor/anchor-${checkpoint!.keyId}.pub.pem`];
    const database = checkpoint!.database;
    files.push(`anchor/${database}.checkpoints.jsonl`);
    for (const file of files) {
      const mode = statSync(path.join(folder, file)).mode & 0o777;
      expect(mode & 0o077, file).toBe(0);
    }
    const lines = await anchor.readCheckpoints(world.database.db);
    expect(lines.at(-1)).toEqual({ line: lines.length, status: 'verified', checkpoint });
  });

  it('vouch for every event up to the head, and the check says how many newer events it cannot vouch for', async () => {
    await anchor.checkpoint(world.database.db);
    const clean = await checkAuditTrail(world.database.db, anchor);
    expect(clean.findings).toEqual([]);
    expect(organisationChainResult(clean, world.organisationId).anchoring.unanchoredEvents).toBe(0);
    await append(world.organisationId, 'test.after-checkpoint');
    await append(world.organisationId, 'test.after-checkpoint');
    const later = organisationChainResult(
      await checkAuditTrail(world.database.db, anchor),
      world.organisationId,
    );
    expect(later.ok).toBe(true);
    expect(later.anchoring.unanchoredEvents).toBe(2);
  });

  it('a superuser disables the trigger, alters an event and recomputes every later hash: detected as a rewrite', async () => {
    const { id: target } = await append(world.organisationId, 'test.target', { amount: 10 });
    await append(world.organisationId, 'test.after-target', { amount: 11 });
    const checkpoint = (await anchor.checkpoint(world.database.db))!;
    const { inDatabase, outside } = await underAttack(async (tx) => {
      await tx.execute(sql`alter table audit_events disable trigger audit_events_no_update_delete`);
      await tx.execute(
        sql`update audit_events set after_value = '{"amount": 99}'::jsonb where id = ${target}`,
      );
      await recomputeFrom(tx, target);
    });
    expect(inDatabase.ok).toBe(true); // the chain alone is fooled
    const rewrite = outside.findings.find((finding) => finding.kind === 'rewritten');
    expect(rewrite).toMatchObject({ toId: checkpoint.headId });
    expect(rewrite!.fromId).toBeLessThanOrEqual(target);
    expect(organisationChainResult(outside, world.organisationId)).toMatchObject({
      ok: false,
      firstBrokenLink: { id: checkpoint.headId },
    });
  });

  it('a superuser deletes the newest events (trigger disabled) and the chain still links: detected as missing', async () => {
    await append(world.organisationId, 'test.tail-1');
    await append(world.organisationId, 'test.tail-2');
    const checkpoint = (await anchor.checkpoint(world.database.db))!;
    const { inDatabase, outside } = await underAttack(async (tx) => {
      await tx.execute(sql`alter table audit_events disable trigger audit_events_no_update_delete`);
      await tx.execute(sql`delete from audit_events where id > ${checkpoint.headId - 2}`);
    });
    expect(inDatabase.ok).toBe(true);
    expect(outside.findings).toContainEqual(
      expect.objectContaining({ kind: 'missing', fromId: checkpoint.headId - 1, toId: checkpoint.headId }),
    );
  });

  it('SET session_replication_role = replica, then a deletion in the middle with recomputed hashes: detected', async () => {
    const { id: removed } = await append(world.organisationId, 'test.to-remove');
    await append(world.organisationId, 'test.after-removed');
    await anchor.checkpoint(world.database.db);
    const { inDatabase, outside } = await underAttack(async (tx) => {
      await tx.execute(sql`set local session_replication_role = replica`);
      await tx.execute(sql`delete from audit_events where id = ${removed}`);
      await recomputeFrom(tx, removed + 1);
    });
    expect(inDatabase.ok).toBe(true);
    expect(outside.findings).toContainEqual(
      expect.objectContaining({ kind: 'missing', fromId: removed, toId: removed }),
    );
    expect(outside.findings.some((finding) => finding.kind === 'rewritten')).toBe(true);
  });

  it('a checkpoint line edited in the log no longer verifies, and the check says so', async () => {
    const copy = openAuditAnchor(path.join(folder, 'edited'));
    const checkpoint = (await copy.checkpoint(world.database.db))!;
    const file = path.join(folder, 'edited', `${checkpoint.database}.checkpoints.jsonl`);
    const forged = { ...checkpoint, headHash: 'f'.repeat(64) };
    writeFileSync(file, `${readFileSync(file, 'utf8')}${JSON.stringify(forged)}\n`);
    const check = await checkAuditTrail(world.database.db, copy);
    expect(check.findings).toEqual([
      expect.objectContaining({
        kind: 'checkpoint-unverifiable',
        message: expect.stringMatching(/line 2 .*signature/),
      }),
    ]);
  });
});

describe('a restored backup', () => {
  it('shows the events lost with it as missing, until the operator records the restore; then new events may reuse the ids', async () => {
    await append(world.organisationId, 'test.before-backup');
    await append(world.organisationId, 'test.lost-with-restore');
    const checkpoint = (await anchor.checkpoint(world.database.db))!;
    // The operator's copy of the log, so the restore line written here does not reach the other tests.
    const copyFolder = path.join(folder, 'restore-copy');
    cpSync(anchor.folder, copyFolder, { recursive: true });
    chmodSync(copyFolder, 0o700);
    const copy = openAuditAnchor(copyFolder);
    let beforeRecording: TrailCheck | undefined;
    let afterRecording: TrailCheck | undefined;
    await superuser.db
      .transaction(async (tx) => {
        // The "restore": the trail as the backup held it, one event short of the last checkpoint.
        await tx.execute(sql`set local session_replication_role = replica`);
        await tx.execute(sql`delete from audit_events where id = ${checkpoint.headId}`);
        beforeRecording = await checkAuditTrail(tx, copy);
        await copy.checkpoint(tx, 'restore');
        await appendAuditEvent(tx, {
          organisationId: world.organisationId,
          actorLabel: 'x',
          action: 'test.after-restore',
        });
        afterRecording = await checkAuditTrail(tx, copy);
        tx.rollback();
      })
      .catch(() => undefined);
    expect(beforeRecording!.findings).toEqual([
      expect.objectContaining({ kind: 'missing', fromId: checkpoint.headId, toId: checkpoint.headId }),
    ]);
    expect(afterRecording!.findings).toEqual([]);
    expect(afterRecording!.restores).toEqual([
      expect.objectContaining({ headId: checkpoint.headId - 1, supersededCheckpoints: expect.any(Number) }),
    ]);
    expect(afterRecording!.restores[0]!.supersededCheckpoints).toBeGreaterThan(0);
  });
});

describe('each organisation sees only its own result', () => {
  it('counts only its own events and never shows another organisation’s break', async () => {
    await appendAuditEvent(second.database.db, {
      organisationId: second.organisationId,
      actorLabel: 'anchor-test',
      action: 'test.second-organisation',
    });
    const { id: target } = await append(world.organisationId, 'test.first-org-target', { value: 1 });
    await anchor.checkpoint(world.database.db);
    const { outside } = await underAttack(async (tx) => {
      await tx.execute(sql`set local session_replication_role = replica`);
      await tx.execute(sql`update audit_events set after_value = '{"value": 2}'::jsonb where id = ${target}`);
    });
    const counted = async (organisationId: number) => {
      const result = await world.database.pool.query<{ n: string }>(
        'select count(*) as n from audit_events where organisation_id = $1',
        [organisationId],
      );
      return Number(result.rows[0]!.n);
    };
    const mine = organisationChainResult(outside, world.organisationId);
    const theirs = organisationChainResult(outside, second.organisationId);
    expect(mine).toMatchObject({ ok: false, firstBrokenLink: { id: target } });
    expect(theirs.ok).toBe(true);
    expect(theirs.findings).toEqual([]);
    expect(theirs.eventsChecked).toBe(await counted(second.organisationId));
    expect(mine.eventsChecked).toBe(await counted(world.organisationId));
    expect(theirs.eventsChecked).toBeLessThan(outside.eventsScanned);
  });
});
