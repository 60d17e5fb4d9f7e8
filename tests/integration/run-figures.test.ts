// An analysis run's report figures are drawn once and kept beside the run: the first render
// stores them, every later version prints the stored drawing (not a new one), and the stored
// drawings are write-once.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getAnalysisRun } from '../../server/features/analysis/index.ts';
import { runReportFigures } from '../../server/features/reports/queue/render-pipeline.ts';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { analysisRunFigures } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-run-figures-'));
process.env.REPORTS_DIR = reportsDir;
const storage = reportStorage(reportsDir);

let world: TestWorld;
let worker: RenderWorker;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  worker = await startTestRenderWorker(world.database.db, storage);
}, 60_000);
afterAll(async () => {
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

/** The SVG of each figure in a rendered report, by figure id, with the per-document id prefix removed. */
function printedFigures(html: string): Map<string, string> {
  return new Map(
    [...html.matchAll(/<figure class="report-figure" id="figure-([^"]+)">(<svg[\s\S]*?<\/svg>)/g)].map(
      (match) => [match[1] ?? '', (match[2] ?? '').replace(/(id="|url\(#|href="#)figure-\d+-/g, '$1')],
    ),
  );
}
const unprefixed = (svg: string) => svg.replace(/(id="|url\(#|href="#)run-/g, '$1');

describe('figures drawn once per analysis run', () => {
  it('the first render stores each figure; later versions print the stored drawing', async () => {
    const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!);
    const run = await getAnalysisRun(world.database.db, world.organisationId, runId);
    const ids = runReportFigures({ run }).map((figure) => figure.id);
    expect(ids.length).toBeGreaterThan(2);
    // One figure stored beforehand with a drawing of its own: the render must print it as stored.
    const marker =
      '<svg xmlns="http://www.w3.org/2000/svg" role="img" width="10" height="10"><title>stored beforehand</title><rect id="run-r" width="10" height="10"/></svg>';
    await world.database.db
      .insert(analysisRunFigures)
      .values({ analysisRunId: runId, figureId: ids[0]!, svg: marker });

    const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    const created = await agent
      .post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', csrfFrom((await agent.get('/')).text))
      .send({});
    expect(created.status).toBe(201);
    const first = await waitForRender(world.database.db, storage, created.body.reportId, 1);
    const rows = await world.database.db
      .select()
      .from(analysisRunFigures)
      .where(eq(analysisRunFigures.analysisRunId, runId));
    expect(rows.map((row) => row.figureId).sort()).toEqual([...ids].sort());
    const printed = printedFigures(first.html ?? '');
    expect(printed.get(ids[0]!)).toBe(unprefixed(marker));
    for (const row of rows) expect(printed.get(row.figureId), row.figureId).toBe(unprefixed(row.svg));

    const again = await agent
      .post(`/api/reports/${created.body.reportId}/versions`)
      .set('x-csrf-token', csrfFrom((await agent.get('/')).text))
      .send({});
    const second = await waitForRender(
      world.database.db,
      storage,
      created.body.reportId,
      again.body.versionNumber,
    );
    expect(printedFigures(second.html ?? '')).toEqual(printed);
    const count = await world.database.db
      .select({ n: sql<number>`count(*)::int` })
      .from(analysisRunFigures)
      .where(eq(analysisRunFigures.analysisRunId, runId));
    expect(count[0]!.n).toBe(ids.length);

    const refusal = await world.database.db
      .execute(sql`update analysis_run_figures set svg = '<svg/>' where analysis_run_id = ${runId}`)
      .then(
        () => 'accepted',
        (error: Error & { cause?: Error }) => error.cause?.message ?? error.message,
      );
    expect(refusal).toMatch(/write-once/);
  }, 120_000);
});
