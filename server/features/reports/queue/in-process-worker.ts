import type { DatabaseHandle } from '../../../platform/db/client.ts';
import { reportStorage } from '../report-storage.ts';
import { parseRenderConfig } from './render-config.ts';
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
      console.log(`[render-worker] rendering reports in this process into ${config.reportsDir}`);
      return worker;
    },
    (error: Error) => {
      console.error(`[render-worker] could not start: ${error.message}`);
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
