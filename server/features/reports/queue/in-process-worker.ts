import { parseRenderConfig } from '../../../platform/config/render-config.ts';
import type { DatabaseHandle } from '../../../platform/db/client.ts';
import { logger } from '../../../platform/logging/logger.ts';
import { reportStorage } from '../../../platform/storage/report-storage.ts';
import { createRenderPipeline } from './render-pipeline.ts';
import { openRenderQueue } from './render-queue.ts';
import { type RenderWorker, startRenderWorker } from './render-worker.ts';

/**
 * The render worker inside the web server (`npm start`), unless RENDER_WORKER=off. It starts in
 * the background: the server serves pages at once, and a worker that cannot start (the database
 * not reachable yet) is reported, not fatal — queued renders wait for any other worker.
 */
export function startInProcessRenderWorker(database: DatabaseHandle, connectionString: string): RenderWorker {
  const config = parseRenderConfig();
  if (!config.inProcessWorker) return { close: async () => undefined };
  const starting: Promise<RenderWorker | null> = startRenderWorker({
    db: database.db,
    queue: openRenderQueue({ config, connectionString, supervise: true }),
    storage: reportStorage(config.reportsDir),
    renderer: createRenderPipeline(),
  }).then(
    (worker) => {
      logger.info({ reportsDir: config.reportsDir }, 'render worker started in this process');
      return worker;
    },
    (error: Error) => {
      logger.error({ err: error }, 'render worker could not start');
      return null;
    },
  );
  return {
    async close() {
      const worker = await starting;
      await worker?.close();
    },
  };
}
