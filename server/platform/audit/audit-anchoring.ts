import { sql } from 'drizzle-orm';
import type { Executor } from '../db/client.ts';
import { logger } from '../logging/logger.ts';
import {
  type AnchorSettings,
  type AuditAnchor,
  configuredAuditAnchor,
  parseAnchorSettings,
} from './audit-anchor.ts';

/**
 * When checkpoints are written: every `pollSeconds` the committed head is looked at, and signed
 * when `everyEvents` events were appended since the last checkpoint, or when it changed and the
 * last checkpoint is `intervalSeconds` old; on every e-signature (`anchorAuditChainNow`); and once
 * at start. A failure to write is logged, never thrown into a request: the trail itself is intact
 * in the database, only the outside anchor lags, and the chain check then says how many events
 * it cannot vouch for.
 */

export interface AuditAnchoring {
  close(): Promise<void>;
}

export function startAuditAnchoring(
  db: Executor,
  anchor: AuditAnchor = configuredAuditAnchor(),
  settings: AnchorSettings = parseAnchorSettings(),
): AuditAnchoring {
  let lastId = -1;
  let lastAt = 0;
  let running: Promise<void> | null = null;
  const tick = async () => {
    const head = await db.execute<{ id: string | null }>(sql`select max(id) as id from audit_events`);
    const headId = Number(head.rows[0]?.id ?? 0);
    if (headId === 0 || headId === lastId) return;
    const due = Date.now() - lastAt >= settings.intervalSeconds * 1000;
    if (lastId >= 0 && headId - lastId < settings.everyEvents && !due) return;
    const checkpoint = await anchor.checkpoint(db);
    if (checkpoint) {
      lastId = checkpoint.headId;
      lastAt = Date.now();
    }
  };
  const run = () => {
    running ??= tick()
      .catch((error: Error) => logger.error({ err: error }, 'audit chain checkpoint failed'))
      .finally(() => {
        running = null;
      });
    return running;
  };
  void run();
  const timer = setInterval(run, settings.pollSeconds * 1000);
  timer.unref();
  return {
    async close() {
      clearInterval(timer);
      await running;
    },
  };
}

/**
 * Checkpoints the committed head now (after an e-signature commits, so the signature's events
 * are anchored at once). Never throws.
 */
export async function anchorAuditChainNow(db: Executor, anchor: AuditAnchor = configuredAuditAnchor()) {
  try {
    return await anchor.checkpoint(db);
  } catch (error) {
    logger.error({ err: error }, 'audit chain checkpoint after a signature failed');
    return null;
  }
}
