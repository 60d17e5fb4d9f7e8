import { z } from 'zod';
import {
  createRenderPipeline,
  openRenderQueue,
  parseRenderConfig,
  reportStorage,
  startRenderWorker,
} from './features/reports/index.ts';
import { openDatabase } from './platform/db/client.ts';
import { logger } from './platform/logging/logger.ts';

/**
 * A render worker on its own (`npm run worker`): renders report versions from the shared queue,
 * so rendering scales out to more processes or machines on one database (with REPORTS_DIR on
 * storage they share). Start the web server with RENDER_WORKER=off to render only here.
 * SIGINT/SIGTERM let the render in flight finish, then close Chromium, the queue and the pool.
 */
const url = z.url({ message: 'DATABASE_URL must be a postgres:// URL' }).safeParse(process.env.DATABASE_URL);
if (!url.success) {
  logger.fatal('render worker cannot start: DATABASE_URL must be a postgres:// URL');
  process.exit(1);
}
const config = parseRenderConfig();
const database = openDatabase(url.data);
const queue = openRenderQueue({ config, connectionString: url.data, supervise: true });
const worker = await startRenderWorker({
  db: database.db,
  queue,
  storage: reportStorage(config.reportsDir),
  renderer: createRenderPipeline(),
});
logger.info({ reportsDir: config.reportsDir }, 'render worker started');

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  logger.info({ signal }, 'render worker stopping after the render in flight');
  setTimeout(() => process.exit(1), 30_000).unref();
  await worker.close();
  await database.close();
  process.exit(0);
}
process.on('SIGINT', () => void shutdown('SIGINT'));
process.on('SIGTERM', () => void shutdown('SIGTERM'));
