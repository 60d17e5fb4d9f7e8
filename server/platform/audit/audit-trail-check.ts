import type { Executor } from '../db/client.ts';
import type { AuditAnchor, Checkpoint } from './audit-anchor.ts';
import { GENESIS_HASH } from './audit-hash.ts';
import { ALTERED_REASON, BROKEN_LINK_REASON, storedAuditEvents } from './stored-audit-events.ts';

/**
 * The audit trail compared with itself and with the checkpoints kept outside the database.
 *
 * One pass over every event in id order recomputes each hash and checks each link (as
 * `verifyAuditChain`), and does not stop at the first break, so every independent break is named.
 * Against the checkpoints it names:
 * - `rewritten`: the hash stored at a checkpointed id differs from the signed one — the trail was
 *   changed at or before that event and the later hashes recomputed to hide it. The change lies
 *   after the last checkpoint that still matches, so the range is (that id, this id].
 * - `missing`: ids absent inside the trail (ids are assigned without gaps since anchoring began),
 *   or events a checkpoint vouched for beyond the newest stored event (the tail was deleted).
 * - `altered` / `link`: content that does not match its hash, a link that does not match its
 *   predecessor (as before).
 * - `checkpoint-unverifiable`: a line of the log whose signature or format does not verify.
 * Events newer than the last checkpoint are the window the checkpoints cannot vouch for; the
 * result says how many there are (per organisation, too).
 */

export type FindingKind = 'altered' | 'link' | 'rewritten' | 'missing' | 'checkpoint-unverifiable';

export interface TrailFinding {
  kind: FindingKind;
  /** The events concerned: ids `fromId`..`toId` (inclusive). */
  fromId: number;
  toId: number;
  message: string;
  /**
   * The organisations whose stored events lie in the range (null: events of no organisation).
   * `unknown` for events that are gone, whose organisation nobody can tell any more.
   */
  organisations: (number | null)[] | 'unknown';
}

export interface OrganisationTally {
  events: number;
  /** Events newer than the last verified checkpoint. */
  unanchored: number;
}

export interface TrailCheck {
  eventsScanned: number;
  findings: TrailFinding[];
  checkpointsRead: number;
  checkpointsCompared: number;
  lastCheckpoint: { headId: number; at: string } | null;
  /** Events newer than the last verified checkpoint, all organisations together. */
  unanchoredEvents: number;
  /** Gaps in ids below the first checkpoint: ids were drawn from a sequence then, which skips. */
  earlierIdGaps: number;
  /** Restores the operator recorded, each with the checkpoints (of events lost with it) it superseded. */
  restores: { headId: number; at: string; supersededCheckpoints: number }[];
  tallies: Map<number | null, OrganisationTally>;
}

/** Events read between two progress reports of a check (the CLI's lines, the background job's row). */
export const PROGRESS_EVERY_EVENTS = 10_000;

export async function checkAuditTrail(
  db: Executor,
  anchor: AuditAnchor,
  onProgress?: (eventsScanned: number) => void | Promise<void>,
  progressEvery = PROGRESS_EVERY_EVENTS,
): Promise<TrailCheck> {
  const lines = await anchor.readCheckpoints(db);
  const findings: TrailFinding[] = [];
  const checkpoints: Checkpoint[] = [];
  for (const line of lines) {
    if (line.status === 'verified') checkpoints.push(line.checkpoint);
    else
      findings.push({
        kind: 'checkpoint-unverifiable',
        fromId: 0,
        toId: 0,
        message: `line ${line.line} of the checkpoint log cannot be trusted: ${line.reason}`,
        organisations: 'unknown',
      });
  }
  const restores = checkpoints.filter((checkpoint) => checkpoint.kind === 'restore');
  // A restore recorded later supersedes the checkpoints of events beyond the restored head.
  const superseded = (checkpoint: Checkpoint) =>
    restores.some((restore) => restore.at > checkpoint.at && checkpoint.headId > restore.headId);
  const current = checkpoints.filter((checkpoint) => !superseded(checkpoint));
  const byId = new Map<number, Checkpoint[]>();
  for (const checkpoint of current)
    byId.set(checkpoint.headId, [...(byId.get(checkpoint.headId) ?? []), checkpoint]);
  const lastCheckpoint = current.reduce<Checkpoint | null>(
    (latest, checkpoint) => (latest === null || checkpoint.headId > latest.headId ? checkpoint : latest),
    null,
  );
  const firstAnchoredId = current.reduce(
    (lowest, checkpoint) => Math.min(lowest, checkpoint.headId),
    Infinity,
  );

  const tallies = new Map<number | null, OrganisationTally>();
  const tally = (organisationId: number | null) => {
    let entry = tallies.get(organisationId);
    if (!entry) {
      entry = { events: 0, unanchored: 0 };
      tallies.set(organisationId, entry);
    }
    return entry;
  };
  let previous = null as { id: number; hash: string; organisationId: number | null } | null;
  let lastMatchedId = 0;
  let organisationsSinceMatch = new Set<number | null>();
  let scanned = 0;
  let compared = 0;
  let earlierIdGaps = 0;

  for await (const row of storedAuditEvents(db)) {
    const expectedId: number = (previous?.id ?? 0) + 1;
    if (row.id !== expectedId) {
      if (row.id - 1 < firstAnchoredId) earlierIdGaps += 1;
      else
        findings.push({
          kind: 'missing',
          fromId: expectedId,
          toId: row.id - 1,
          message: `events ${range(expectedId, row.id - 1)} are missing from the trail`,
          organisations: 'unknown',
        });
    }
    if (row.previousHash !== (previous?.hash ?? GENESIS_HASH)) {
      findings.push({
        kind: 'link',
        fromId: previous?.id ?? row.id,
        toId: row.id,
        message: `event ${row.id}: ${BROKEN_LINK_REASON}`,
        organisations: unique([previous?.organisationId ?? row.organisationId, row.organisationId]),
      });
    }
    if (row.recomputedHash !== row.hash) {
      findings.push({
        kind: 'altered',
        fromId: row.id,
        toId: row.id,
        message: `event ${row.id}: ${ALTERED_REASON}`,
        organisations: [row.organisationId],
      });
    }
    organisationsSinceMatch.add(row.organisationId);
    for (const checkpoint of byId.get(row.id) ?? []) {
      compared += 1;
      if (checkpoint.headHash === row.hash) continue;
      findings.push({
        kind: 'rewritten',
        fromId: lastMatchedId + 1,
        toId: row.id,
        message: `event ${row.id}'s hash differs from the one signed at ${checkpoint.at}: the trail was rewritten between events ${lastMatchedId + 1} and ${row.id}`,
        organisations: [...organisationsSinceMatch],
      });
    }
    if (
      (byId.get(row.id) ?? []).every((checkpoint) => checkpoint.headHash === row.hash) &&
      byId.has(row.id)
    ) {
      lastMatchedId = row.id;
      organisationsSinceMatch = new Set();
    }
    const entry = tally(row.organisationId);
    entry.events += 1;
    if (lastCheckpoint === null || row.id > lastCheckpoint.headId) entry.unanchored += 1;
    previous = { id: row.id, hash: row.hash, organisationId: row.organisationId };
    scanned += 1;
    if (onProgress && scanned % progressEvery === 0) await onProgress(scanned);
  }

  const newestId = previous?.id ?? 0;
  if (lastCheckpoint && lastCheckpoint.headId > newestId) {
    findings.push({
      kind: 'missing',
      fromId: newestId + 1,
      toId: lastCheckpoint.headId,
      message: `events ${range(newestId + 1, lastCheckpoint.headId)} are missing: the checkpoint of ${lastCheckpoint.at} vouched for them, and the trail now ends at event ${newestId}`,
      organisations: 'unknown',
    });
  }
  const unanchoredEvents = [...tallies.values()].reduce((sum, entry) => sum + entry.unanchored, 0);
  return {
    eventsScanned: scanned,
    findings,
    checkpointsRead: lines.length,
    checkpointsCompared: compared,
    lastCheckpoint: lastCheckpoint ? { headId: lastCheckpoint.headId, at: lastCheckpoint.at } : null,
    unanchoredEvents,
    earlierIdGaps,
    restores: restores.map((restore) => ({
      headId: restore.headId,
      at: restore.at,
      supersededCheckpoints: checkpoints.filter(
        (checkpoint) => restore.at > checkpoint.at && checkpoint.headId > restore.headId,
      ).length,
    })),
    tallies,
  };
}

const range = (from: number, to: number) => (from === to ? `${from}` : `${from}–${to}`);
const unique = <T>(values: T[]) => [...new Set(values)];
