// The report of a multi-attribute run, rendered by the real worker: the summary names the
// limiting attribute and the study's shelf life, each attribute has its own section with its own
// criterion, the appendix lists the censored results with their text and the study's rule, and
// the run keeps every attribute's figures (ids unique per attribute) beside it.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seriesSha256 } from '../../server/features/intake/index.ts';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { multiAttributeReportFixture } from '../../server/features/reports/render/render-fixture-attributes.ts';
import { analysisRunFigures, analysisRuns, datasets } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-report-attributes-'));
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

/**
 * A run of three attributes stored as a multi-attribute run stores it (the contract's
 * StoredAnalysisResult, built from the engine per attribute by `multiAttributeReportFixture`),
 * on a dataset whose series are tagged by attribute, in the demo study of the organisation.
 */
async function multiAttributeRun(): Promise<number> {
  const { db } = world.database;
  const analyst = world.users.analyst!;
  const demo = await makeAnalysisRun(db, world.organisationId, analyst);
  const [demoDataset] = await db.select().from(datasets).where(eq(datasets.id, demo.datasetId));
  const [demoRun] = await db.select().from(analysisRuns).where(eq(analysisRuns.id, demo.runId));
  const { series, stored } = multiAttributeReportFixture();
  const sha256 = seriesSha256(series);
  const [dataset] = await db
    .insert(datasets)
    .values({
      organisationId: world.organisationId,
      studyId: demo.studyId,
      uploadId: demoDataset!.uploadId,
      mapping: demoDataset!.mapping,
      series,
      pointCount: series.reduce((sum, entry) => sum + entry.observations.length, 0),
      sha256,
      createdBy: analyst.id,
    })
    .returning({ id: datasets.id });
  const [run] = await db
    .insert(analysisRuns)
    .values({
      organisationId: world.organisationId,
      studyId: demo.studyId,
      datasetId: dataset!.id,
      datasetSha256: sha256,
      options: demoRun!.options,
      exclusions: [],
      engineVersion: demoRun!.engineVersion,
      result: stored,
      methodStatement: demoRun!.methodStatement,
      supersedesRunId: null,
      runBy: analyst.id,
    })
    .returning({ id: analysisRuns.id });
  return run!.id;
}

const text = (html: string) =>
  html
    .replace(/<[^>]+>/g, ' ')
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&amp;/g, '&')
    .replace(/&#x27;/g, "'")
    .replace(/&quot;/g, '"')
    .replace(/\s+/g, ' ');
const section = (html: string, id: string) => {
  const start = html.indexOf(`aria-labelledby="${id}"`);
  expect(start, id).toBeGreaterThan(0);
  return text(html.slice(start, html.indexOf('</section>', start)));
};

describe('the report of a multi-attribute run', () => {
  it('names the limiting attribute on the summary, gives each attribute its section and keeps censored results in the appendix', async () => {
    const runId = await multiAttributeRun();
    const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    const created = await agent
      .post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', csrfFrom((await agent.get('/')).text))
      .send({});
    expect(created.status).toBe(201);
    const version = await waitForRender(world.database.db, storage, created.body.reportId, 1);
    const html = version.html ?? '';
    const { stored } = multiAttributeReportFixture();
    const months = stored.studyShelfLife!.proposedShelfLifeMonths;

    const summary = section(html, 'summary-heading');
    expect(summary).toContain(`${months} months at 25 °C / 60 % RH`);
    expect(summary).toContain('Limiting attribute: Impurity B .');
    expect(summary).toContain(stored.studyShelfLife!.statement);
    expect(summary).toMatch(/Impurity B \(not more than 0\.5 % label claim\): \d+ months — limiting\./);
    expect(summary).toMatch(/Water \(not more than 3 % w\/w\): \d+ months\./);
    // The summary gives the mass balance in one sentence; its full statement is in its section.
    expect(summary).toMatch(/Mass balance \(Assay plus .+\): .+ of the initial value at the last pull/);
    expect(summary).not.toContain(stored.massBalance!.statement);
    expect(section(html, 'mass-balance-heading')).toContain(stored.massBalance!.statement);

    const assay = section(html, 'attribute-1-heading');
    const impurity = section(html, 'attribute-2-heading');
    const water = section(html, 'attribute-3-heading');
    expect(assay).toContain('1. Assay Acceptance criterion 95 to 105 % of label claim. 3 series');
    expect(impurity).toContain(
      "2. Impurity B Acceptance criterion not more than 0.5 % label claim. This attribute limits the study's shelf life.",
    );
    expect(water).toContain('3. Water Acceptance criterion not more than 3 % w/w.');
    expect(water).not.toContain('limits the study');
    expect(impurity).toContain('Impurity B: results per batch and condition');
    expect(impurity).toContain('Impurity B: Q1E shelf life at 25 °C');

    const data = section(html, 'data-heading');
    expect(data).toContain(
      'Impurity B: results reported below a limit (censored); by the study\'s rule, results reported below a limit (such as "<LOQ") are excluded from the fit',
    );
    expect(data).toMatch(/Impurity B · VZ-2401 @ 25 °C 0 month < 0\.05 \S+ excluded from the fit/);
    expect(data).toContain("reported below the limit (< 0.05): excluded from the fit by the study's rule");
    expect(data).toContain('< 0.05 (censored)');
    expect(section(html, 'mass-balance-heading')).toContain('Mass balance: Assay plus Impurity B');

    // Temperature dependence: the rising attributes on their formation rate (engine 0.4.0), the assay on k.
    const temperature = section(html, 'temperature-heading');
    const rising = temperature.slice(temperature.indexOf('Impurity B'));
    expect(rising).toContain('from formation rates k_f = dC/dt of zero order at 25 °C, 40 °C');
    expect(rising).toMatch(/Predicted formation rate k_f at 25 °C: \S+ \(% label claim\)\/month/);
    expect(rising).not.toContain('Predicted k at');
    expect(temperature.slice(0, temperature.indexOf('Impurity B'))).toContain('Predicted k at 25 °C');

    // Every attribute's figures are drawn once and kept beside the run, ids unique per attribute.
    const rows = await world.database.db
      .select({ figureId: analysisRunFigures.figureId })
      .from(analysisRunFigures)
      .where(eq(analysisRunFigures.analysisRunId, runId));
    const ids = rows.map((row) => row.figureId);
    expect(ids).toEqual(expect.arrayContaining(['q1e-25', 'attribute-2-q1e-25', 'attribute-3-q1e-25']));
    expect(ids).toEqual(
      expect.arrayContaining([
        'series-0-curves',
        'attribute-2-series-0-curves',
        'attribute-3-series-2-curves',
      ]),
    );
    for (const id of ids) expect(html, id).toContain(`id="figure-${id}"`);

    // The printed page 1 (Chromium's PDF, read back by poppler) carries the verdict.
    const pdf = storage.pdfPath(version.pdfSha256!);
    const first = execFileSync('pdftotext', ['-f', '1', '-l', '1', pdf, '-'], { encoding: 'utf8' }).replace(
      /\s+/g,
      ' ',
    );
    expect(first).toContain('Limiting attribute: Impurity B.');
    expect(first).toContain(`${months} months`);
  }, 120_000);

  it('a one-attribute run prints one attribute section, no mass balance, and keeps its figure ids unprefixed', async () => {
    const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!);
    const { agent } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
    const created = await agent
      .post(`/api/analyses/${runId}/reports`)
      .set('x-csrf-token', csrfFrom((await agent.get('/')).text))
      .send({});
    expect(created.status).toBe(201);
    const html = (await waitForRender(world.database.db, storage, created.body.reportId, 1)).html ?? '';
    expect(section(html, 'attribute-1-heading')).toContain('1. Assay');
    expect(html).not.toContain('attribute-2-heading');
    expect(html).not.toContain('mass-balance-heading');
    expect(section(html, 'summary-heading')).toMatch(/Limiting attribute: Assay \./);
    const rows = await world.database.db
      .select({ figureId: analysisRunFigures.figureId })
      .from(analysisRunFigures)
      .where(eq(analysisRunFigures.analysisRunId, runId));
    expect(rows.length).toBeGreaterThan(2);
    expect(rows.filter((row) => row.figureId.startsWith('attribute-'))).toEqual([]);
  }, 120_000);
});
