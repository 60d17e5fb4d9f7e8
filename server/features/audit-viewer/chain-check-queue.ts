import type pg from 'pg';
import PgBoss from 'pg-boss';
import { logger } from '../../platform/logging/logger.ts';

/**
 * The queue of chain checks too large for a request (`audit-chain-check`, carrying
 * `{ checkId }`, a row of `audit_chain_checks`), in pg-boss's schema beside the render queues.
 *
 * Like those, the queue is created by the migration step as the owner role
 * (`installChainCheckQueue`, called from `server/migrate-database.ts`); the app's pg-boss starts
 * with `migrate: false` and creates nothing, since the app role may not. A check lost with a
 * killed process is expired after `expireInSeconds` and run again from the start (a check reads
 * only; its outcome event and the row's `done` commit together, so a retry never records twice).
 */

export const CHAIN_CHECK_QUEUE = 'audit-chain-check';
const PGBOSS_SCHEMA = 'pgboss';

export interface ChainCheckJobData {
  checkId: number;
}

/** The queue's settings, applied by the migration step. */
export const CHAIN_CHECK_QUEUE_SETTINGS = {
  name: CHAIN_CHECK_QUEUE,
  retryLimit: 2,
  retryDelay: 5,
  retryBackoff: false,
  // Generous: a check reads every event of the trail, all organisations' (an hour is a bound, not
  // an estimate; a check still running then is taken as lost and started again).
  expireInSeconds: 3600,
};

export interface ChainCheckQueueOptions {
  /** The app's pool (the web process sends jobs through it) … */
  pool?: pg.Pool;
  /** … or own connections (the migration step, a worker). */
  connectionString?: string;
  /** Only the migration step installs pg-boss's schema. */
  migrate?: boolean;
  /** Run pg-boss maintenance (expiring lost jobs): the worker does. */
  supervise?: boolean;
}

export interface ChainCheckQueue {
  readonly boss: PgBoss;
  /** Starts pg-boss (once); the queue itself must already exist. */
  ready(): Promise<void>;
  send(data: ChainCheckJobData): Promise<string>;
  close(): Promise<void>;
}

export function openChainCheckQueue(options: ChainCheckQueueOptions): ChainCheckQueue {
  const pool = options.pool;
  const connection = pool
    ? { db: { executeSql: (text: string, values?: unknown[]) => pool.query(text, values) } }
    : { connectionString: options.connectionString, max: 2 };
  const boss = new PgBoss({
    ...connection,
    schema: PGBOSS_SCHEMA,
    application_name: 'rateledger-chain-check',
    supervise: options.supervise ?? false,
    migrate: options.migrate ?? false,
    schedule: false,
  });
  boss.on('error', (error) => logger.error({ err: error }, 'chain check queue error'));
  let starting: Promise<void> | null = null;
  let closed = false;
  return {
    boss,
    ready() {
      if (closed) return Promise.reject(new Error('the chain check queue is closed'));
      starting ??= boss
        .start()
        .then(() => undefined)
        .catch((error) => {
          starting = null;
          throw error;
        });
      return starting;
    },
    async send(data) {
      await this.ready();
      const id = await boss.send(CHAIN_CHECK_QUEUE, data);
      if (!id) throw new Error(`the ${CHAIN_CHECK_QUEUE} queue refused the job (is the queue installed?)`);
      return id;
    },
    async close() {
      if (closed) return;
      closed = true;
      if (starting) {
        await starting.catch(() => undefined);
        await boss.stop({ graceful: true, wait: true, timeout: 15_000 });
      }
    },
  };
}

/** The migration step: installs pg-boss's schema if needed and creates (or updates) the queue. */
export async function installChainCheckQueue(ownerUrl: string): Promise<void> {
  const queue = openChainCheckQueue({ connectionString: ownerUrl, migrate: true });
  try {
    await queue.ready();
    await queue.boss.createQueue(CHAIN_CHECK_QUEUE, CHAIN_CHECK_QUEUE_SETTINGS);
    await queue.boss.updateQueue(CHAIN_CHECK_QUEUE, CHAIN_CHECK_QUEUE_SETTINGS);
  } finally {
    await queue.close();
  }
}
