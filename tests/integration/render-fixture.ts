import { and, eq } from 'drizzle-orm';
import type request from 'supertest';
import { createRenderPipeline } from '../../server/features/reports/queue/render-pipeline.ts';
import { openRenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { type RenderWorker, startRenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import type { Database } from '../../server/platform/db/client.ts';
import { reportVersions } from '../../server/platform/db/schema/index.ts';
import type { ReportStorage } from '../../server/platform/storage/report-storage.ts';
import { csrfFrom, signFormHiddenFields } from '../support/test-app.ts';

/** The real render worker on the test database, printing with Chromium into `storage`. */
export function startTestRenderWorker(db: Database, storage: ReportStorage): Promise<RenderWorker> {
  return startRenderWorker({
    db,
    queue: openRenderQueue({
      config: parseRenderConfig(),
      connectionString: process.env.DATABASE_URL!,
      supervise: true,
    }),
    storage,
    renderer: createRenderPipeline(),
    log: () => undefined,
  });
}

/** Waits (60 s at most) until version `versionNumber` of the report is rendered and its PDF stored. */
export async function waitForRender(
  db: Database,
  storage: ReportStorage,
  reportId: number,
  versionNumber = 1,
): Promise<typeof reportVersions.$inferSelect> {
  const deadline = Date.now() + 60_000;
  for (;;) {
    const [row] = await db
      .select()
      .from(reportVersions)
      .where(and(eq(reportVersions.reportId, reportId), eq(reportVersions.versionNumber, versionNumber)));
    if (row?.renderStatus === 'ready' && (await storage.hasPdf(row.pdfSha256!))) return row;
    if (row?.renderStatus === 'failed' || Date.now() > deadline)
      throw new Error(`render ${row?.renderStatus}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

/**
 * Posts a review form (`…/submit`, `…/return`, `…/sign`) with the fields the review page carries
 * (CSRF token, record stamp), read from the page first as a browser would.
 */
export async function postReviewForm(
  agent: ReturnType<typeof request.agent>,
  target: string,
  fields: Record<string, unknown>,
) {
  const page = await agent.get(target.replace(/\/(submit|return|sign)$/, ''));
  return agent
    .post(target)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...signFormHiddenFields(page.text), ...fields });
}
