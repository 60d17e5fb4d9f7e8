import type PgBoss from 'pg-boss';
import type { AuditAnchor } from '../../platform/audit/audit-anchor.ts';
import type { Database } from '../../platform/db/client.ts';
import { logger } from '../../platform/logging/logger.ts';
import { type ChainCheckJobSettings, parseChainCheckJobSettings, runChainCheck } from './chain-check-jobs.ts';
import { CHAIN_CHECK_QUEUE, type ChainCheckJobData, openChainCheckQueue } from './chain-check-queue.ts';

/**
 * The worker of background chain checks: one check at a time (a check reads the whole trail; two
 * at once would only halve each one's speed), on its own pg-boss connections with maintenance on,
 * so a check lost with a killed process is expired and run again. `close()` lets the check in
 * flight finish (pg-boss graceful stop, up to 15 s), then closes the connections.
 */

export interface ChainCheckWorker {
  close(): Promise<void>;
}

export interface ChainCheckWorkerOptions {
  db: Database;
  connectionString: string;
  anchor?: AuditAnchor;
  settings?: ChainCheckJobSettings;
  pollingIntervalSeconds?: number;
}

export async function startChainCheckWorker(options: ChainCheckWorkerOptions): Promise<ChainCheckWorker> {
  const { db, anchor } = options;
  const settings = options.settings ?? parseChainCheckJobSettings();
  const queue = openChainCheckQueue({ connectionString: options.connectionString, supervise: true });
  await queue.ready();
  const workOptions = { batchSize: 1, pollingIntervalSeconds: options.pollingIntervalSeconds ?? 1 };
  await queue.boss.work<ChainCheckJobData>(
    CHAIN_CHECK_QUEUE,
    workOptions,
    async (jobs: PgBoss.Job<ChainCheckJobData>[]) => {
      for (const job of jobs) {
        const checkId = Number(job.data?.checkId);
        if (!Number.isInteger(checkId) || checkId <= 0) continue;
        const started = Date.now();
        const row = await runChainCheck(db, checkId, anchor, settings);
        logger.info(
          { component: 'chain-check', checkId, events: row?.eventsScanned, ms: Date.now() - started },
          'audit chain check finished',
        );
      }
    },
  );
  return {
    async close() {
      await queue.boss.offWork(CHAIN_CHECK_QUEUE).catch(() => undefined);
      await queue.close();
    },
  };
}

/**
 * The worker inside the web server (`npm start`): started in the background, so a database that
 * is not reachable yet is logged, not fatal; queued checks then wait for the next start.
 */
export function startInProcessChainCheckWorker(db: Database, connectionString: string): ChainCheckWorker {
  const starting = startChainCheckWorker({ db, connectionString }).catch((error: Error) => {
    logger.error({ err: error }, 'audit chain check worker could not start');
    return null;
  });
  return {
    async close() {
      await (await starting)?.close();
    },
  };
}
