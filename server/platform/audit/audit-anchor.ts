import { sign, verify } from 'node:crypto';
import { appendFileSync, existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { sql } from 'drizzle-orm';
import { z } from 'zod';
import { projectPath } from '../config/project-root.ts';
import type { Executor } from '../db/client.ts';
import {
  type AnchorSigningKey,
  loadOrCreateSigningKey,
  readPublicKeys,
  refuseOpenToOthers,
} from './audit-anchor-key.ts';
import { canonicalJson } from './canonical-json.ts';

/**
 * Checkpoints of the audit chain, anchored outside the database. A checkpoint states "the chain's
 * newest event was id N with hash H at time T", signed with an Ed25519 key PostgreSQL cannot
 * reach, and is appended as one JSON line to a log file outside PostgreSQL. Whoever rewrites the
 * trail in the database (disabling the trigger, changing an event and recomputing every later
 * hash) cannot rewrite the checkpoints, so the chain check finds the hash at a checkpointed id
 * changed, or the checkpointed events missing. Events newer than the last checkpoint are the
 * window the log cannot vouch for. (21 CFR 11.10(c) protection of records, 11.10(e) audit trails;
 * EU GMP Annex 11 §7.1 data secured against damage, §9 audit trails.)
 *
 * One log per database (`<database>.checkpoints.jsonl`), so a folder shared by several databases
 * (test databases, say) never mixes their chains. Lines are appended with O_APPEND in one write
 * each, so the web server and other processes on the same host may append to the same file.
 */

export const CHECKPOINT_FORMAT = 1;

export interface Checkpoint {
  format: typeof CHECKPOINT_FORMAT;
  database: string;
  headId: number;
  headHash: string;
  /** When the checkpoint was signed (the app server's clock, ISO 8601 UTC). */
  at: string;
  keyId: string;
  /**
   * `restore`: written by the operator after restoring a backup (`check-trail-cli.ts
   * --record-restore`): the restored head, and that the checkpoints made before it of events
   * beyond that head are superseded (those events were lost with the restore and are reported
   * as such, not as a rewrite, from then on).
   */
  kind?: 'restore';
  /** Ed25519 over the canonical JSON of every other field, base64. */
  signature: string;
}

const anchorSettingsSchema = z.object({
  AUDIT_ANCHOR_DIR: z.string().min(1).default(projectPath('.data', 'audit-anchor')),
  AUDIT_ANCHOR_INTERVAL_SECONDS: z.coerce.number().int().min(10).max(86_400).default(300),
  AUDIT_ANCHOR_EVERY_EVENTS: z.coerce.number().int().min(1).max(1_000_000).default(100),
  AUDIT_ANCHOR_POLL_SECONDS: z.coerce.number().int().min(1).max(3600).default(15),
});

export interface AnchorSettings {
  folder: string;
  /** A changed head is checkpointed at least this often. */
  intervalSeconds: number;
  /** …and whenever this many events were appended since the last checkpoint. */
  everyEvents: number;
  /** How often the head is looked at. */
  pollSeconds: number;
}

export function parseAnchorSettings(source: NodeJS.ProcessEnv = process.env): AnchorSettings {
  const result = anchorSettingsSchema.safeParse(source);
  if (!result.success) {
    const problems = result.error.issues.map((issue) => `  ${issue.path.join('.')}: ${issue.message}`);
    throw new Error(`Rateledger cannot anchor the audit trail; fix the environment:\n${problems.join('\n')}`);
  }
  const env = result.data;
  return {
    folder: path.resolve(env.AUDIT_ANCHOR_DIR),
    intervalSeconds: env.AUDIT_ANCHOR_INTERVAL_SECONDS,
    everyEvents: env.AUDIT_ANCHOR_EVERY_EVENTS,
    pollSeconds: env.AUDIT_ANCHOR_POLL_SECONDS,
  };
}

const signedPart = (checkpoint: Omit<Checkpoint, 'signature'>) =>
  Buffer.from(
    canonicalJson({
      format: checkpoint.format,
      database: checkpoint.database,
      headId: checkpoint.headId,
      headHash: checkpoint.headHash,
      at: checkpoint.at,
      keyId: checkpoint.keyId,
      ...(checkpoint.kind ? { kind: checkpoint.kind } : {}),
    }),
  );

/** A line of the log as read back: the checkpoint, or why it cannot be trusted. */
export type CheckpointLine =
  | { line: number; status: 'verified'; checkpoint: Checkpoint }
  | { line: number; status: 'unverifiable'; reason: string };

export interface AuditAnchor {
  readonly folder: string;
  /** Signs the committed head of the chain and appends it; null when the trail is empty. */
  checkpoint(db: Executor, kind?: 'restore'): Promise<Checkpoint | null>;
  /** Every line of this database's log, each verified against the folder's public keys. */
  readCheckpoints(db: Executor): Promise<CheckpointLine[]>;
  /** The public keys (PEM) by key id, for the export. */
  publicKeys(): { keyId: string; pem: string }[];
}

async function databaseName(db: Executor): Promise<string> {
  const result = await db.execute<{ name: string }>(sql`select current_database() as name`);
  return result.rows[0]!.name;
}

const logFile = (folder: string, database: string) =>
  path.join(folder, `${database.replace(/[^A-Za-z0-9_.-]/g, '_')}.checkpoints.jsonl`);

export function openAuditAnchor(folder: string): AuditAnchor {
  let key: AnchorSigningKey | null = null;
  const signingKey = () => {
    key ??= loadOrCreateSigningKey(folder);
    return key;
  };
  return {
    folder,
    async checkpoint(db, kind) {
      const database = await databaseName(db);
      // Only committed events: a checkpoint of an event later rolled back would look like a deletion.
      const head = await db.execute<{ id: string; hash: string }>(
        sql`select id, hash from audit_events order by id desc limit 1`,
      );
      const row = head.rows[0];
      if (!row) return null;
      const { keyId, privateKey } = signingKey();
      const unsigned = {
        format: CHECKPOINT_FORMAT,
        database,
        headId: Number(row.id),
        headHash: row.hash,
        at: new Date().toISOString(),
        keyId,
        ...(kind ? { kind } : {}),
      } as const;
      const checkpoint: Checkpoint = {
        ...unsigned,
        signature: sign(null, signedPart(unsigned), privateKey).toString('base64'),
      };
      const file = logFile(folder, database);
      appendFileSync(file, `${JSON.stringify(checkpoint)}\n`, { mode: 0o600, flag: 'a' });
      refuseOpenToOthers(file, 'checkpoint log');
      return checkpoint;
    },
    async readCheckpoints(db) {
      const database = await databaseName(db);
      const file = logFile(folder, database);
      if (!existsSync(file)) return [];
      const keys = readPublicKeys(folder);
      const lines = readFileSync(file, 'utf8').split('\n');
      const out: CheckpointLine[] = [];
      lines.forEach((text, index) => {
        if (text.trim() === '') return;
        out.push(readLine(text, index + 1, database, keys));
      });
      return out;
    },
    publicKeys() {
      return [...readPublicKeys(folder)].map(([keyId, { pem }]) => ({ keyId, pem }));
    },
  };
}

function readLine(
  text: string,
  line: number,
  database: string,
  keys: ReturnType<typeof readPublicKeys>,
): CheckpointLine {
  let value: Partial<Checkpoint>;
  try {
    value = JSON.parse(text) as Partial<Checkpoint>;
  } catch {
    return { line, status: 'unverifiable', reason: 'not JSON' };
  }
  const { format, headId, headHash, at, keyId, signature, kind } = value;
  if (
    format !== CHECKPOINT_FORMAT ||
    (kind !== undefined && kind !== 'restore') ||
    typeof headId !== 'number' ||
    typeof headHash !== 'string' ||
    typeof at !== 'string' ||
    typeof keyId !== 'string' ||
    typeof signature !== 'string'
  ) {
    return { line, status: 'unverifiable', reason: 'not a checkpoint of a known format' };
  }
  if (value.database !== database) return { line, status: 'unverifiable', reason: 'names another database' };
  const key = keys.get(keyId);
  if (!key)
    return { line, status: 'unverifiable', reason: `signed with key ${keyId}, whose public key is missing` };
  const checkpoint = value as Checkpoint;
  const valid = verify(null, signedPart(checkpoint), key.publicKey, Buffer.from(signature, 'base64'));
  if (!valid) return { line, status: 'unverifiable', reason: 'the signature does not verify' };
  return { line, status: 'verified', checkpoint };
}

let configured: AuditAnchor | null = null;
/** The anchor of this process, from AUDIT_ANCHOR_DIR (`.data/audit-anchor` by default). */
export function configuredAuditAnchor(): AuditAnchor {
  configured ??= openAuditAnchor(parseAnchorSettings().folder);
  return configured;
}
