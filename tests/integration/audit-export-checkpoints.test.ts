import { createPublicKey, verify } from 'node:crypto';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { and, desc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { configuredAuditAnchor } from '../../server/platform/audit/audit-anchor.ts';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { auditEvents } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 14 §1: "The audit export carries the checkpoints." Beside the CSV of the trail, the audit
 * page offers the checkpoints signed outside the database with the public keys that verify them.
 * An inspector holding both files can check, without the application, that each checkpoint's
 * Ed25519 signature (RFC 8032) verifies over the canonical JSON of its other fields, and that the
 * hash the CSV holds at a checkpointed id is the signed one. Verified here with Node's crypto and
 * a canonical JSON written in this test (keys sorted, no white space), not the product's own.
 */

interface ExportedCheckpoint {
  line: number;
  format?: number;
  database?: string;
  headId?: number;
  headHash?: string;
  at?: string;
  keyId?: string;
  kind?: string;
  signature?: string;
  unverifiable?: string;
}

let world: TestWorld;
let folder: string;
let checkpointedId: number;
const saved = process.env.AUDIT_ANCHOR_DIR;

function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  if (value !== null && typeof value === 'object')
    return `{${Object.keys(value as object)
      .sort()
      .map((key) => `${JSON.stringify(key)}:${canonical((value as Record<string, unknown>)[key])}`)
      .join(',')}}`;
  return JSON.stringify(value);
}

beforeAll(async () => {
  folder = path.join(mkdtempSync(path.join(tmpdir(), 'rateledger-export-checkpoints-')), 'anchor');
  process.env.AUDIT_ANCHOR_DIR = folder;
  world = await createTestWorld({ admin: ['admin'], reviewer: ['reviewer'] });
  const { id } = await appendAuditEvent(world.database.db, {
    organisationId: world.organisationId,
    actorLabel: 'export-checkpoints-test',
    action: 'test.checkpointed',
    after: { note: 'the head a checkpoint will vouch for' },
  });
  const checkpoint = await configuredAuditAnchor().checkpoint(world.database.db);
  expect(checkpoint?.headId).toBe(id);
  checkpointedId = id;
  await appendAuditEvent(world.database.db, {
    organisationId: world.organisationId,
    actorLabel: 'export-checkpoints-test',
    action: 'test.after-checkpoint',
  });
});
afterAll(async () => {
  if (saved === undefined) delete process.env.AUDIT_ANCHOR_DIR;
  else process.env.AUDIT_ANCHOR_DIR = saved;
  await world?.close();
});

async function exportedCheckpoints(who: 'admin' | 'reviewer') {
  const { agent } = await signIn(world.app, world.users[who]!.email, world.users[who]!.password);
  const response = await agent.get('/audit/export-checkpoints.json');
  expect(response.status).toBe(200);
  expect(response.headers['content-disposition']).toMatch(/^attachment; filename="audit-checkpoints-/);
  return {
    agent,
    body: response.body as {
      publicKeys: { keyId: string; pem: string }[];
      checkpoints: ExportedCheckpoint[];
    },
  };
}

describe('the audit export with its checkpoints', () => {
  it('verify without the application: each signature with the exported public key, each head hash against the CSV', async () => {
    const { agent, body } = await exportedCheckpoints('reviewer');
    const keys = new Map(body.publicKeys.map((key) => [key.keyId, createPublicKey(key.pem)]));
    expect(keys.size).toBeGreaterThan(0);
    const verified = body.checkpoints.filter((checkpoint) => checkpoint.signature !== undefined);
    expect(verified.length).toBe(body.checkpoints.length);
    for (const { line: _line, signature, ...signed } of verified) {
      const key = keys.get(signed.keyId!);
      expect(key, `key ${signed.keyId}`).toBeDefined();
      expect(verify(null, Buffer.from(canonical(signed)), key!, Buffer.from(signature!, 'base64'))).toBe(
        true,
      );
    }

    const csv = parse((await agent.get('/audit/export.csv')).text) as string[][];
    const header = csv[0]!;
    const hashById = new Map(csv.slice(1).map((row) => [Number(row[0]), row[header.indexOf('hash')]]));
    const ours = verified.find((checkpoint) => checkpoint.headId === checkpointedId);
    expect(ours).toBeDefined();
    expect(hashById.get(checkpointedId)).toBe(ours!.headHash);
    // The event after the checkpoint is in the CSV but no checkpoint vouches for it (yet).
    expect(Math.max(...hashById.keys())).toBeGreaterThan(checkpointedId);
  });

  it('is itself recorded in the audit trail, with the number of checkpoints handed out', async () => {
    const { body } = await exportedCheckpoints('admin');
    const [recorded] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.organisationId, world.organisationId), eq(auditEvents.action, 'audit.exported')),
      )
      .orderBy(desc(auditEvents.id))
      .limit(1);
    expect(recorded).toMatchObject({ actorUserId: world.users.admin!.id });
    expect(recorded!.afterValue).toEqual({ format: 'checkpoints', checkpoints: body.checkpoints.length });
  });

  it('a line edited in the log is exported as unverifiable, never as a checkpoint', async () => {
    const log = readdirSync(folder).find((name) => name.endsWith('.checkpoints.jsonl'))!;
    const file = path.join(folder, log);
    const original = readFileSync(file, 'utf8');
    const lines = original.trimEnd().split('\n');
    const forged = JSON.parse(lines[0]!) as { headHash: string };
    forged.headHash = '0'.repeat(64);
    writeFileSync(file, `${[JSON.stringify(forged), ...lines.slice(1)].join('\n')}\n`, { mode: 0o600 });
    try {
      const { body } = await exportedCheckpoints('reviewer');
      expect(body.checkpoints[0]).toEqual({ line: 1, unverifiable: 'the signature does not verify' });
    } finally {
      writeFileSync(file, original, { mode: 0o600 });
    }
  });
});
