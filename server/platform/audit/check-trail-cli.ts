import { fileURLToPath } from 'node:url';
import { openDatabase } from '../db/client.ts';
import { openAuditAnchor, parseAnchorSettings } from './audit-anchor.ts';
import { checkAuditTrail } from './audit-trail-check.ts';

/**
 * The operator's chain check over every organisation, against the checkpoint log:
 * `node scripts/run-built.mjs server/platform/audit/check-trail-cli.ts` with DATABASE_URL and
 * AUDIT_ANCHOR_DIR set (after restoring a backup, say: docs/audit-trail-security.md). Prints
 * every finding and the unanchored window, and exits 1 when anything was found, 0 otherwise.
 * With `--record-restore` it first signs the restored head as a restore line (see below).
 */
export async function runTrailCheck(databaseUrl: string, folder: string): Promise<number> {
  const database = openDatabase(databaseUrl);
  try {
    const check = await checkAuditTrail(database.db, openAuditAnchor(folder), (scanned) =>
      console.error(`… ${scanned} events read`),
    );
    console.log(`events read: ${check.eventsScanned}`);
    console.log(
      `checkpoint lines read: ${check.checkpointsRead}, compared with stored events: ${check.checkpointsCompared}`,
    );
    console.log(
      check.lastCheckpoint
        ? `last checkpoint: event ${check.lastCheckpoint.headId} at ${check.lastCheckpoint.at}; ${check.unanchoredEvents} newer events are not covered by any checkpoint`
        : 'no checkpoint found: nothing outside the database vouches for the trail',
    );
    for (const restore of check.restores)
      console.log(
        `restore recorded at ${restore.at}: trail restored up to event ${restore.headId}; ${restore.supersededCheckpoints} earlier checkpoints of events lost with it are superseded`,
      );
    if (check.earlierIdGaps > 0)
      console.log(
        `${check.earlierIdGaps} id gaps before the first checkpoint (ids were then drawn from a sequence, which skips)`,
      );
    for (const finding of check.findings) console.log(`FINDING ${finding.kind}: ${finding.message}`);
    console.log(check.findings.length === 0 ? 'RESULT: intact' : `RESULT: ${check.findings.length} findings`);
    return check.findings.length === 0 ? 0 : 1;
  } finally {
    await database.close();
  }
}

/**
 * `--record-restore`: after a restore was checked and its loss (the `missing` range) written up,
 * the operator signs the restored head as a restore line, so later checks report the lost range
 * once, as a recorded restore, instead of as a rewrite when new events reuse those ids.
 */
export async function recordRestore(databaseUrl: string, folder: string) {
  const database = openDatabase(databaseUrl);
  try {
    const restore = await openAuditAnchor(folder).checkpoint(database.db, 'restore');
    console.log(
      restore ? `restore recorded at event ${restore.headId}` : 'the trail is empty: nothing recorded',
    );
  } finally {
    await database.close();
  }
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error('DATABASE_URL is not set');
    process.exit(2);
  }
  const folder = parseAnchorSettings().folder;
  if (process.argv.includes('--record-restore')) await recordRestore(url, folder);
  process.exit(await runTrailCheck(url, folder));
}
