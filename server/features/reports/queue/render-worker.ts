import type PgBoss from 'pg-boss';
import type { Database } from '../../../platform/db/client.ts';
import { logger } from '../../../platform/logging/logger.ts';
import type { ReportStorage } from '../../../platform/storage/report-storage.ts';
import {
  RENDER_DEAD_LETTER_QUEUE,
  RENDER_QUEUE,
  type RenderJobData,
  type RenderQueue,
} from './render-queue.ts';
import { failAbandonedVersion, renderReportVersion, sweepIncoming } from './render-report-job.ts';
import type { ReportRenderer } from './report-renderer.ts';

/**
 * The render worker: `concurrency` pg-boss workers on `render-report` (one job each at a time)
 * and one on the dead-letter queue. It runs inside the web server by default and alone in
 * `server/worker.ts` (`npm run worker`); any number of them may share one database.
 *
 * `close()` stops fetching, lets the renders in flight finish (pg-boss graceful stop), then closes
 * the render pipeline (Chromium). A render cut short by a kill is retried by another worker once
 * pg-boss expires it.
 */

export interface RenderWorker {
  close(): Promise<void>;
}

export interface RenderWorkerOptions {
  db: Database;
  queue: RenderQueue;
  storage: ReportStorage;
  renderer: ReportRenderer;
  log?: (message: string) => void;
}

type Job = PgBoss.JobWithMetadata<RenderJobData>;

export async function startRenderWorker(options: RenderWorkerOptions): Promise<RenderWorker> {
  const { db, queue, storage, renderer } = options;
  const log = options.log ?? ((message: string) => logger.info({ component: 'render-worker' }, message));
  await queue.ready();
  const swept = await sweepIncoming(db, storage);
  if (Object.keys(swept).length > 0) log(`cleared .incoming: ${JSON.stringify(swept)}`);

  const context = { db, storage, renderer };
  const workOptions = {
    includeMetadata: true as const,
    batchSize: 1,
    pollingIntervalSeconds: queue.config.pollingIntervalSeconds,
  };
  for (let index = 0; index < queue.config.concurrency; index += 1) {
    await queue.boss.work<RenderJobData>(RENDER_QUEUE, workOptions, async (jobs: Job[]) => {
      for (const job of jobs) {
        const versionId = Number(job.data?.reportVersionId);
        if (!Number.isInteger(versionId) || versionId <= 0) {
          log(`job ${job.id}: no report version id; dropped`);
          continue;
        }
        const started = Date.now();
        const outcome = await renderReportVersion(context, versionId, {
          jobId: job.id,
          retryCount: job.retryCount,
          retryLimit: job.retryLimit,
        });
        log(
          `version ${versionId}: ${outcome} in ${Date.now() - started} ms (job ${job.id}, attempt ${job.retryCount + 1})`,
        );
      }
    });
  }
  await queue.boss.work<RenderJobData>(RENDER_DEAD_LETTER_QUEUE, workOptions, async (jobs: Job[]) => {
    for (const job of jobs) {
      const versionId = Number(job.data?.reportVersionId);
      if (!Number.isInteger(versionId) || versionId <= 0) continue;
      const failed = await failAbandonedVersion(db, versionId, {
        jobId: job.id,
        retryCount: job.retryCount,
        retryLimit: job.retryLimit,
      });
      if (failed) log(`version ${versionId}: failed after its render attempts were lost`);
    }
  });

  let closing: Promise<void> | null = null;
  return {
    close() {
      closing ??= (async () => {
        await queue.boss.offWork(RENDER_QUEUE).catch(() => undefined);
        await queue.boss.offWork(RENDER_DEAD_LETTER_QUEUE).catch(() => undefined);
        await queue.close();
        await renderer.close();
      })();
      return closing;
    },
  };
}
