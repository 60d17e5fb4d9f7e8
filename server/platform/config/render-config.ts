import { z } from 'zod';
import { DEFAULT_REPORTS_DIR } from '../storage/report-storage.ts';

/**
 * Settings of the render queue and its workers, parsed once from the environment (documented in
 * `.env.example`). The timing values decide how soon a render lost with a crashed process is
 * tried again: pg-boss marks an active job failed once it has run `expireInSeconds`, at the next
 * maintenance pass (every `maintenanceIntervalSeconds`), and retries it after `retryDelaySeconds`.
 * A warm render takes about a second, a cold one (Chromium starting) a few, so 60 s is ample and
 * a crash costs at most about a minute.
 */
const renderConfigSchema = z.object({
  REPORTS_DIR: z.string().min(1).default(DEFAULT_REPORTS_DIR),
  /** `in-process`: `npm start`'s server also renders; `off`: only `npm run worker` processes do. */
  RENDER_WORKER: z.enum(['in-process', 'off']).default('in-process'),
  RENDER_CONCURRENCY: z.coerce.number().int().min(1).max(16).default(1),
  RENDER_RETRY_LIMIT: z.coerce.number().int().min(0).max(20).default(3),
  RENDER_RETRY_DELAY_SECONDS: z.coerce.number().int().min(0).max(3600).default(2),
  RENDER_EXPIRE_SECONDS: z.coerce.number().int().min(5).max(3600).default(60),
  RENDER_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).max(600).default(5),
  RENDER_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(1),
});

export interface RenderConfig {
  reportsDir: string;
  inProcessWorker: boolean;
  concurrency: number;
  retryLimit: number;
  retryDelaySeconds: number;
  expireInSeconds: number;
  maintenanceIntervalSeconds: number;
  pollingIntervalSeconds: number;
}

export function parseRenderConfig(source: NodeJS.ProcessEnv = process.env): RenderConfig {
  const result = renderConfigSchema.safeParse(source);
  if (!result.success) {
    const problems = result.error.issues.map((issue) => `  ${issue.path.join('.')}: ${issue.message}`);
    throw new Error(`Rateledger cannot start the render queue; fix the environment:\n${problems.join('\n')}`);
  }
  const env = result.data;
  return {
    reportsDir: env.REPORTS_DIR,
    inProcessWorker: env.RENDER_WORKER === 'in-process',
    concurrency: env.RENDER_CONCURRENCY,
    retryLimit: env.RENDER_RETRY_LIMIT,
    retryDelaySeconds: env.RENDER_RETRY_DELAY_SECONDS,
    expireInSeconds: env.RENDER_EXPIRE_SECONDS,
    maintenanceIntervalSeconds: env.RENDER_MAINTENANCE_SECONDS,
    pollingIntervalSeconds: env.RENDER_POLL_SECONDS,
  };
}
