import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  applyExclusions,
  type ResolvedExclusion,
} from '../../server/features/analysis/analysis-exclusions.ts';
import { getAnalysisRun } from '../../server/features/analysis/index.ts';
import { evaluateStudy } from '../../server/features/analysis/study-attribute-runs.ts';
import { keyResults } from '../../server/features/review/key-results.ts';
import { analysisRuns, studies } from '../../server/platform/db/schema/index.ts';
import { analysisOptionsSchema } from '../../shared/api/analyses.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { IMPURITY_B, seedDataset, seedStudy, WATER } from './analysis-attributes-fixture.ts';
import { type Agent, tokenOf } from './study-flow-fixture.ts';

/**
 * Issue 16: an analysis run stores its result in the compact form ('compact-1': long number lists
 * as exact doubles in `result_arrays`, the rest JSON). What a run reads back through the product's
 * doors (the service, the API, the page, the figures) must be exactly what the engine computed —
 * the same as the earlier all-JSON form gives — and the database must refuse a row whose two
 * parts disagree and any change to the doubles after the fact (21 CFR 11.10(a), (e): records
 * that cannot be altered without detection). Dense series (48 pulls each, several attributes, a
 * censored "<LOQ" result) so that every kind of long list is in play.
 */

let world: TestWorld;
let agent: Agent;
let context: { organisationId: number; userId: number };

/** A deterministic scatter in ±0.08 (a linear congruential sequence; common practice for test data). */
function scatter(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return (state / 2147483648 - 0.5) * 0.16;
  };
}

/** 48 pulls, every half month from 0 to 23.5, per batch and temperature, for one attribute. */
function denseSeries(
  name: string,
  valueUnit: string,
  value: (time: number, rate: number, wobble: number) => number,
  censored?: (time: number, rate: number) => boolean,
): Series[] {
  const conditions = [
    { batch: 'CV-01', temperatureC: 25, rate: 1 },
    { batch: 'CV-02', temperatureC: 25, rate: 1 },
    { batch: 'CV-01', temperatureC: 40, rate: 4 },
  ];
  return conditions.map(({ batch, temperatureC, rate }, c) => {
    const next = scatter(17 + c + name.length);
    return {
      id: `${name} · ${batch} @ ${temperatureC} °C`,
      attribute: name,
      batch,
      temperatureC,
      timeUnit: 'month',
      valueUnit,
      observations: Array.from({ length: 48 }, (_, i) => {
        const time = i / 2;
        const source = { row: 2 + i, cell: `D${2 + i + 50 * c}` };
        if (censored?.(time, rate)) return { time, value: 0, censored: { text: '<LOQ' }, source };
        return { time, value: Number(value(time, rate, next()).toFixed(3)), source };
      }),
    };
  });
}

const denseStudySeries = (): Series[] => [
  ...denseSeries('Assay', '% of label claim', (t, rate, w) => 100 - 0.12 * rate * t + w),
  ...denseSeries(
    'Impurity B',
    '% of label claim',
    (t, rate, w) => 0.01 + 0.015 * rate * t + w / 10,
    (t, rate) => t < 1 && rate === 1,
  ),
  ...denseSeries('Water', '% w/w', (t, rate, w) => 2 + 0.03 * rate * t + w),
];

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  agent = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  context = { organisationId: world.organisationId, userId: world.users.analyst!.id };
});
afterAll(async () => {
  await world?.close();
});

async function rawRun(runId: number) {
  const [row] = await world.database.db.select().from(analysisRuns).where(eq(analysisRuns.id, runId));
  return row!;
}

/** What PostgreSQL's jsonb gives back for `value`: the earlier form's stored result, exactly. */
async function throughJsonb(value: unknown): Promise<unknown> {
  const result = await world.database.db.execute<{ value: unknown }>(
    sql`select ${JSON.stringify(value)}::jsonb as value`,
  );
  return result.rows[0]!.value;
}

/** The engine's result for the run, computed again here from the stored dataset and study. */
async function engineResult(runId: number, datasetSeries: Series[]) {
  const raw = await rawRun(runId);
  const [study] = await world.database.db.select().from(studies).where(eq(studies.id, raw.studyId));
  const { series } = applyExclusions(datasetSeries, raw.exclusions as ResolvedExclusion[]);
  const options = analysisOptionsSchema.parse((raw.options as { analyst: unknown }).analyst);
  return evaluateStudy(series, study!, options).result;
}

describe('a dense study of three attributes stored in the compact form', () => {
  let datasetSeries: Series[];
  let runId: number;
  let excludedRunId: number;

  beforeAll(async () => {
    const studyId = await seedStudy(world.database.db, context, {
      additionalAttributes: [IMPURITY_B, WATER],
      batches: ['CV-01', 'CV-02'],
    });
    datasetSeries = denseStudySeries();
    const datasetId = await seedDataset(world.database.db, context, studyId, datasetSeries);
    const response = await agent
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', await tokenOf(agent))
      .send({});
    expect(response.status).toBe(201);
    runId = response.body.runId as number;
    const excluded = await agent
      .post(`/api/analyses/${runId}/exclusions`)
      .set('x-csrf-token', await tokenOf(agent))
      .send({
        seriesId: 'Assay · CV-02 @ 25 °C',
        observationIndex: 7,
        reason: 'Sample vial cracked before injection; see deviation DV-0042 (invented).',
      });
    expect(excluded.status).toBe(201);
    excludedRunId = excluded.body.runId as number;
  }, 120_000);

  it('stores the compact form: a small JSON part and the long lists as doubles', async () => {
    for (const id of [runId, excludedRunId]) {
      const row = await rawRun(id);
      expect(row.resultForm).toBe('compact-1');
      expect(row.resultArrays).not.toBeNull();
      expect(row.resultArrays!.length % 8).toBe(0);
      expect(row.resultArrays!.length).toBeGreaterThan(0);
      const json = JSON.stringify(row.result);
      expect(json).toContain('"$doubles"');
      // Residual points keep the observations by reference to the dataset's series.
      expect(json).toContain('"$series":"Assay · CV-01 @ 25 °C"');
    }
  });

  it('reads back exactly what the engine computed, as the JSON form would have stored it', async () => {
    for (const id of [runId, excludedRunId]) {
      const read = await getAnalysisRun(world.database.db, world.organisationId, id);
      const expected = await throughJsonb(await engineResult(id, datasetSeries));
      // Equal as text: the same numbers to the last bit and the same key order as jsonb's.
      expect(JSON.stringify(read.result)).toBe(JSON.stringify(expected));
    }
    const excluded = await getAnalysisRun(world.database.db, world.organisationId, excludedRunId);
    const assay = excluded.result.analysis.series.find((entry) => entry.id === 'Assay · CV-02 @ 25 °C')!;
    expect(assay.analysis!.n).toBe(47);
    expect(assay.analysis!.diagnostics!.points).toHaveLength(47);
  });

  it('a run stored in the JSON form reads, pages and draws the same as its compact twin', async () => {
    const row = await rawRun(runId);
    const read = await getAnalysisRun(world.database.db, world.organisationId, runId);
    const { id: _id, ...rest } = row;
    const [twin] = await world.database.db
      .insert(analysisRuns)
      .values({ ...rest, resultForm: 'json', resultArrays: null, result: read.result })
      .returning({ id: analysisRuns.id });
    const twinRead = await getAnalysisRun(world.database.db, world.organisationId, twin!.id);
    expect(JSON.stringify(twinRead.result)).toBe(JSON.stringify(read.result));

    const figures = await agent.get(`/api/analyses/${runId}/figures`);
    const twinFigures = await agent.get(`/api/analyses/${twin!.id}/figures`);
    expect(figures.status).toBe(200);
    expect(twinFigures.status).toBe(200);
    expect(figures.body.figures.length).toBeGreaterThan(3);
    expect(JSON.stringify(twinFigures.body)).toBe(JSON.stringify(figures.body));

    const csv = await agent.get(`/api/analyses/${runId}/export.csv`);
    const twinCsv = await agent.get(`/api/analyses/${twin!.id}/export.csv`);
    expect(csv.status).toBe(200);
    expect(csv.text.split('\n').length).toBeGreaterThan(10);
    expect(twinCsv.text).toBe(csv.text);

    const page = await agent.get(`/analyses/${runId}`);
    const twinPage = await agent.get(`/analyses/${twin!.id}`);
    expect(page.status).toBe(200);
    expect(twinPage.status).toBe(200);
    const unnumbered = (html: string) =>
      html
        .replaceAll(`/analyses/${twin!.id}`, '/analyses/RUN')
        .replaceAll(`/analyses/${runId}`, '/analyses/RUN')
        .replace(/Run (?:#|no\. ?)?\d+/g, 'Run N')
        .replace(/name="_csrf" value="[^"]*"/g, '')
        .replace(/<meta name="csrf-token" content="[^"]*"/g, '');
    // Both pages show the same results table (the run number aside).
    const table = (html: string) => unnumbered(html).match(/<table[\s\S]*?<\/table>/)?.[0];
    expect(table(page.text)).toBeDefined();
    expect(table(twinPage.text)).toBe(table(page.text));

    // The review's key results read the JSON part directly: the compact form leaves every value
    // they read in JSON (scalars and text), so they match the decoded result's.
    expect(keyResults(row)).toEqual(keyResults({ ...row, result: read.result }));
  });

  it('the database refuses a row whose form and doubles disagree', async () => {
    const row = await rawRun(runId);
    const { id: _id, ...rest } = row;
    await expect(
      world.database.db.insert(analysisRuns).values({ ...rest, resultForm: 'compact-1', resultArrays: null }),
    ).rejects.toMatchObject({ cause: { constraint: 'analysis_runs_result_form_known' } });
    await expect(
      world.database.db.insert(analysisRuns).values({ ...rest, resultForm: 'json' }),
    ).rejects.toMatchObject({ cause: { constraint: 'analysis_runs_result_form_known' } });
    await expect(
      world.database.db
        .insert(analysisRuns)
        .values({ ...rest, resultArrays: row.resultArrays!.subarray(0, row.resultArrays!.length - 3) }),
    ).rejects.toMatchObject({ cause: { constraint: 'analysis_runs_result_form_known' } });
  });

  it('the doubles of a stored run cannot be changed, even by the database administrator', async () => {
    const damaged = Buffer.from((await rawRun(runId)).resultArrays!);
    damaged.writeDoubleLE(99, 0);
    await expect(
      world.database.db.update(analysisRuns).set({ resultArrays: damaged }).where(eq(analysisRuns.id, runId)),
    ).rejects.toThrow();
    const superuserUrl = process.env.TEST_SUPERUSER_URL;
    if (superuserUrl === undefined) return;
    const { default: pg } = await import('pg');
    const admin = new pg.Client({ connectionString: superuserUrl });
    await admin.connect();
    try {
      await expect(
        admin.query('update analysis_runs set result_arrays = $1 where id = $2', [damaged, runId]),
      ).rejects.toThrow(/write-once|immutable|cannot be changed|not allowed/i);
    } finally {
      await admin.end();
    }
    const after = await rawRun(runId);
    expect(after.resultArrays!.readDoubleLE(0)).not.toBe(99);
  });
});
