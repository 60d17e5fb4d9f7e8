// @ts-expect-error jsdom ships no type declarations, and the project has no @types/jsdom.
import { JSDOM as UntypedJsdom } from 'jsdom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDemoDataset } from '../../server/demo/demo-study.ts';
import { formatSignificant } from '../../shared/figures/significant-figures.ts';
import type { StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 17 §4: each figure on the analysis page has a "data" table (the plotted points, fitted
 * values, residuals) in a native <details>, which the keyboard and screen readers open, with a
 * caption and header cells; its numbers are the stored run's.
 */
const JSDOM = UntypedJsdom as new (html: string) => { window: { document: Document } };

let world: TestWorld;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;
let datasetId: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  datasetId = (
    await createDemoDataset(world.database.db, {
      organisationId: world.organisationId,
      analystUserId: world.users.analyst!.id,
      analystName: 'Test analyst',
    })
  ).datasetId;
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  token = csrfFrom((await analyst.get('/')).text);
});
afterAll(async () => {
  await world?.close();
});

async function pageOf(runId: number) {
  const page = await analyst.get(`/analyses/${runId}`);
  expect(page.status).toBe(200);
  const body = (await analyst.get(`/api/analyses/${runId}`)).body as {
    result: StoredAnalysisResult;
    series: Series[];
  };
  return { document: new JSDOM(page.text).window.document, stored: body.result, series: body.series };
}
/** The data table of one figure, as rows of cell texts under its column headings. */
function tableOf(document: Document, figureId: string) {
  const details = document.querySelector(`details[data-figure-data="${figureId}"]`)!;
  expect(details, figureId).not.toBeNull();
  const table = details.querySelector('table')!;
  const columns = [...table.querySelectorAll('thead th')].map((cell) => cell.textContent!.trim());
  const rows = [...table.querySelectorAll('tbody tr')].map((row) =>
    [...row.children].map((cell) => cell.textContent!.trim()),
  );
  return { details, table, columns, rows };
}
const number = (value: number | null) => formatSignificant(value, 4);

describe('the data table of each figure on the analysis page', () => {
  it('every figure has a closed <details> "Data of this figure" with a captioned table and header cells', async () => {
    const run = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', token)
      .send({ options: { order: 1 } });
    expect(run.status).toBe(201);
    const { document } = await pageOf(run.body.runId as number);
    const figures = [...document.querySelectorAll('[data-island="analysis-figure"]')];
    expect(figures.length).toBeGreaterThan(3);
    for (const placeholder of figures) {
      const id = placeholder.getAttribute('data-figure-id')!;
      const { details, table } = tableOf(document, id);
      expect(details.closest('figure'), id).toBe(placeholder.closest('figure'));
      expect(details.hasAttribute('open'), id).toBe(false);
      expect(details.querySelector('summary')?.textContent?.trim(), id).toBe('Data of this figure');
      expect(table.querySelector('caption')?.textContent?.trim(), id).not.toBe('');
      const headings = [...table.querySelectorAll('thead th')];
      expect(headings.length, id).toBeGreaterThan(2);
      expect(
        headings.every((cell) => cell.getAttribute('scope') === 'col'),
        id,
      ).toBe(true);
      const rows = [...table.querySelectorAll('tbody tr')];
      expect(rows.length, id).toBeGreaterThan(0);
      for (const row of rows) {
        expect(row.firstElementChild?.tagName, id).toBe('TH');
        expect(row.firstElementChild?.getAttribute('scope'), id).toBe('row');
        expect(row.children.length, id).toBe(headings.length);
      }
      // A scrolling table is reachable by keyboard and named.
      const region = details.querySelector('[role="region"]')!;
      expect(region.getAttribute('tabindex'), id).toBe('0');
      expect(region.getAttribute('aria-label'), id).toMatch(/^Data of “/);
    }
    expect(document.querySelector('details[data-figure-data="arrhenius"]')).not.toBeNull();
    expect(document.querySelector('details[data-figure-data^="q1e-"]')).not.toBeNull();
  });

  it('lists fitted values and residuals from the stored run, and flags an excluded point in the run that excludes it', async () => {
    const first = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', token)
      .send({ options: { order: 1 } });
    const earlierId = first.body.runId as number;
    const reason = 'Vial cracked at the 2-month pull (deviation DV-TEST-2).';
    const excluded = await analyst
      .post(`/api/analyses/${earlierId}/exclusions`)
      .set('x-csrf-token', token)
      .send({ seriesId: 'QT-2402 @ 40 °C', observationIndex: 2, reason });
    expect(excluded.status).toBe(201);

    const newer = await pageOf(excluded.body.runId as number);
    const index = newer.stored.analysis.series.findIndex((entry) => entry.id === 'QT-2402 @ 40 °C');
    const fitted = newer.stored.analysis.series[index]!.analysis!;
    const curves = tableOf(newer.document, `series-${index}-curves`);
    expect(curves.rows[2]![2]).toBe(`excluded: ${reason}`);
    expect(curves.rows.filter((row) => row[2] !== 'used')).toHaveLength(1);
    const model = fitted.models.find((candidate) => candidate.order === 1)!;
    const column = curves.columns.indexOf('first order: fitted');
    expect(column).toBeGreaterThan(2);
    const observations = newer.series.find((entry) => entry.id === 'QT-2402 @ 40 °C')!.observations;
    expect(curves.rows).toHaveLength(observations.length);
    observations.forEach((observation, row) => {
      const expected = model.c0! * Math.exp(-model.k! * observation.time);
      expect(curves.rows[row]![0]).toBe(number(observation.time));
      expect(curves.rows[row]![column]).toBe(number(expected));
      expect(curves.rows[row]![column + 1]).toBe(number(observation.value - expected));
    });
    const residuals = tableOf(newer.document, `series-${index}-residuals`);
    expect(residuals.rows.map((row) => row[2])).toEqual(
      fitted.diagnostics!.points.map((point) => number(point.fitted)),
    );
    expect(residuals.rows.map((row) => row[3])).toEqual(
      fitted.diagnostics!.points.map((point) => number(point.residual)),
    );

    // The earlier run's page still shows its own stored numbers: the point is used there.
    const earlier = await pageOf(earlierId);
    expect(tableOf(earlier.document, `series-${index}-curves`).rows[2]![2]).toBe('used');
  });
});
