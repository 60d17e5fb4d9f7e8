import { type SQL, sql } from 'drizzle-orm';
import type pg from 'pg';
import PgBoss from 'pg-boss';
import type { RenderConfig } from '../../../platform/config/render-config.ts';
import type { Executor } from '../../../platform/db/client.ts';
import { logger } from '../../../platform/logging/logger.ts';

/**
 * The render queue: pg-boss 10 in its own schema `pgboss` on the application's database. One
 * module owns the PgBoss instance and exposes `close()`.
 *
 * - `render-report` carries `{ reportVersionId }`; retries, retry delay and expiry come from
 *   `RenderConfig`, so a render lost with a killed process is failed by pg-boss's maintenance and
 *   retried within about `expireInSeconds + maintenanceIntervalSeconds`.
 * - `render-report-failed` is its dead-letter queue: a job whose retries are used up lands there,
 *   and its worker records the version as failed with a reason a person can read.
 * - `enqueue(tx, …)` inserts the job through the caller's transaction (pg-boss's `db` option), so
 *   a report version and its job commit together or not at all: no version waits for a job that
 *   was never sent, and no job names a version that was rolled back.
 */

export const PGBOSS_SCHEMA = 'pgboss';
export const RENDER_QUEUE = 'render-report';
export const RENDER_DEAD_LETTER_QUEUE = 'render-report-failed';

export interface RenderJobData {
  reportVersionId: number;
}

export interface RenderQueue {
  readonly boss: PgBoss;
  readonly config: RenderConfig;
  /** Installs/migrates the pgboss schema and creates both queues (idempotent; cached). */
  ready(): Promise<void>;
  /** Sends the render job inside `executor`'s transaction; returns the job id. */
  enqueue(executor: Executor, data: RenderJobData): Promise<string>;
  close(): Promise<void>;
}

export interface RenderQueueOptions {
  config: RenderConfig;
  /** Own connections (worker process): pg-boss opens a small pool of its own. */
  connectionString?: string;
  /** Or share the app's pool (the web process only sends jobs). */
  pool?: pg.Pool;
  /** Run pg-boss maintenance (expiry of lost jobs, archiving). Workers do; a sender need not. */
  supervise: boolean;
  /**
   * Install or migrate pg-boss's schema: only the migration step does (`server/migrate-database.ts`,
   * as the owner role); the app's role may not create anything, so it starts without migrating.
   */
  migrate?: boolean;
}

export function openRenderQueue(options: RenderQueueOptions): RenderQueue {
  const { config } = options;
  const connection = options.pool
    ? { db: poolExecutor(options.pool) }
    : { connectionString: options.connectionString, max: 4 };
  const boss = new PgBoss({
    ...connection,
    schema: PGBOSS_SCHEMA,
    application_name: 'rateledger-render-queue',
    supervise: options.supervise,
    migrate: options.migrate ?? false,
    schedule: false,
    maintenanceIntervalSeconds: config.maintenanceIntervalSeconds,
  });
  boss.on('error', (error) => logger.error({ err: error }, 'render queue error'));

  let starting: Promise<void> | null = null;
  let closed = false;

  async function install() {
    await boss.start();
    await boss.createQueue(RENDER_DEAD_LETTER_QUEUE, { name: RENDER_DEAD_LETTER_QUEUE, retryLimit: 5 });
    const settings = {
      name: RENDER_QUEUE,
      retryLimit: config.retryLimit,
      retryDelay: config.retryDelaySeconds,
      retryBackoff: false,
      expireInSeconds: config.expireInSeconds,
      deadLetter: RENDER_DEAD_LETTER_QUEUE,
    };
    await boss.createQueue(RENDER_QUEUE, settings);
    // The queue may exist from an earlier start with other settings: apply today's.
    await boss.updateQueue(RENDER_QUEUE, settings);
  }

  return {
    boss,
    config,
    ready() {
      if (closed) return Promise.reject(new Error('the render queue is closed'));
      starting ??= install().catch((error) => {
        starting = null;
        throw error;
      });
      return starting;
    },
    async enqueue(executor, data) {
      await this.ready();
      const id = await boss.send(RENDER_QUEUE, data, { db: drizzleExecutor(executor) });
      if (!id) throw new Error(`the ${RENDER_QUEUE} queue refused the job (is the queue installed?)`);
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

/** pg-boss's `Db` over a pg Pool. */
function poolExecutor(pool: pg.Pool): PgBoss.Db {
  return { executeSql: (text, values) => pool.query(text, values) };
}

/**
 * pg-boss's `Db` over a drizzle executor (a transaction, usually): the positional `$n`
 * placeholders of pg-boss's SQL become drizzle parameters, so the statement runs on the
 * transaction's own connection and commits or rolls back with it.
 */
export function drizzleExecutor(executor: Executor): PgBoss.Db {
  return {
    async executeSql(text, values = []) {
      const pieces = text.split(/\$(\d+)/);
      const query: SQL = sql.empty();
      pieces.forEach((piece, index) => {
        if (index % 2 === 0) query.append(sql.raw(piece));
        else query.append(sql`${values[Number(piece) - 1] ?? null}`);
      });
      const result = await executor.execute(query);
      return { rows: result.rows };
    },
  };
}
