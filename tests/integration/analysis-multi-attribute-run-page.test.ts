import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import {
  assaySeries,
  impuritySeries,
  seedDataset,
  seedStudy,
  waterSeries,
} from './analysis-attributes-fixture.ts';
import { type Agent, tokenOf } from './study-flow-fixture.ts';

/**
 * Issue 15 §1 from end to end: a run of three attributes made by the engine through the API (the
 * invented "Corvalide" study of `analysis-attributes-fixture.ts`), read back on the analysis page,
 * through the figures API and in the CSV, so that what the run stores and what the page reads
 * agree (analysis-multi-attribute-page.test.ts checks the page in detail on a stored fixture).
 */

let world: TestWorld;
let agent: Agent;
let runId: number;
let page: string;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  agent = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  const context = { organisationId: world.organisationId, userId: world.users.analyst!.id };
  const studyId = await seedStudy(world.database.db, context);
  const datasetId = await seedDataset(world.database.db, context, studyId, [
    ...assaySeries(),
    ...impuritySeries(),
    ...waterSeries(),
  ]);
  const created = await agent
    .post(`/api/datasets/${datasetId}/analyses`)
    .set('x-csrf-token', await tokenOf(agent))
    .send({});
  expect(created.status).toBe(201);
  runId = created.body.runId;
  const response = await agent.get(`/analyses/${runId}`);
  expect(response.status).toBe(200);
  page = response.text;
});

afterAll(async () => {
  await world?.close();
});

describe('the page of a run of three attributes made by the engine', () => {
  it('names the limiting attribute and shows each attribute under its own heading', async () => {
    const run = (await agent.get(`/api/analyses/${runId}`)).body;
    const limiting = run.result.studyShelfLife.limitingAttributes as string[];
    expect(limiting).toEqual(['Impurity B']);
    expect(/id="study-verdict"[^>]*>([^<]*)</.exec(page)?.[1]).toBe(
      `Proposed shelf life of the study: ${run.result.studyShelfLife.proposedShelfLife} months, limited by Impurity B.`,
    );
    const headings = [...page.matchAll(/<h2[^>]*>([^<]*)<\/h2>/g)].map((match) => match[1]);
    expect(headings).toEqual(
      expect.arrayContaining([
        'Results: Assay',
        'Impurity B (% of label claim)',
        'Water (% w/w)',
        'Mass balance',
      ]),
    );
    expect(page).toContain('&lt;LOQ');
  });

  it('serves each further attribute’s figures and lists every attribute in the CSV', async () => {
    const water = await agent.get(`/api/analyses/${runId}/figures?group=attribute-2-dataset`);
    expect(water.status).toBe(200);
    expect(water.body.figures.map((figure: { title: string }) => figure.title)).toContain(
      'Water: Q1E shelf life at 25 °C',
    );
    const csv = await agent.get(`/api/analyses/${runId}/export.csv`);
    const rows = parse(csv.text.replace(/^\uFEFF/, ''), { columns: true }) as Record<string, string>[];
    expect(new Set(rows.map((row) => row.attribute))).toEqual(new Set(['Assay', 'Impurity B', 'Water']));
  });
});
