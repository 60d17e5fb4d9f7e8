import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getAnalysisRun } from '../../server/features/analysis/index.ts';
import { canonicalJson } from '../../server/platform/audit/canonical-json.ts';
import { analysisRuns, studies } from '../../server/platform/db/schema/index.ts';
import { analysisOptionsSchema } from '../../shared/api/analyses.ts';
import { confidenceBands, type StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import { analyseDataset, type DatasetOptions } from '../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { assaySeries, impuritySeries, seedDataset, seedStudy } from './analysis-attributes-fixture.ts';
import { type Agent, tokenOf } from './study-flow-fixture.ts';

/**
 * Issue 15 §1: a study of one attribute is analysed exactly as before attributes were listed. The
 * stored result, options and method statement of a run through the API are compared, byte for
 * byte (canonical JSON), with the engine called the way runAnalysis called it before (its engine
 * options copied below as they were); results below the limit are the one change, and only where
 * the data hold some.
 */

let world: TestWorld;
let agent: Agent;
let context: { organisationId: number; userId: number };

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  agent = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  context = { organisationId: world.organisationId, userId: world.users.analyst!.id };
});
afterAll(async () => {
  await world?.close();
});

type Study = typeof studies.$inferSelect;

/** runAnalysis' engine options before attributes were listed (server/features/analysis/analysis-runs.ts at 9b340da). */
function oldEngineOptions(
  options: ReturnType<typeof analysisOptionsSchema.parse>,
  study: Study,
): DatasetOptions {
  return {
    confidenceLevel: options.confidenceLevel,
    errorModel: options.errorModel,
    ...(options.order === undefined ? {} : { order: options.order }),
    ...(study.lowerLimit === null ? {} : { lowerLimit: study.lowerLimit }),
    ...(study.upperLimit === null ? {} : { upperLimit: study.upperLimit }),
    ...(study.storageTemperatureC === null ? {} : { storageTemperatureC: study.storageTemperatureC }),
    ...(study.workingOrder === null || study.workingOrder === undefined
      ? {}
      : {
          workingOrder: {
            order: study.workingOrder as 0 | 1 | 2,
            reason: study.workingOrderReason || 'stated by the study',
          },
        }),
    direction: study.direction,
    q1e: {
      storage: study.storageCategory,
      longTermTemperatureC: study.storageTemperatureC,
      intermediateTemperatureC: study.intermediateTemperatureC,
      acceleratedTemperatureC: study.acceleratedTemperatureC,
      acceleratedChange: study.acceleratedChange,
      intermediateChange: study.intermediateChange,
      littleChange: study.littleChange,
      supportingData: study.supportingData,
    },
  };
}

/** What the old runAnalysis stored for these series (the JSON the database round-trips). */
function oldRun(series: Series[], study: Study, analyst: Record<string, unknown>) {
  const options = analysisOptionsSchema.parse(analyst);
  const engine = oldEngineOptions(options, study);
  const analysis = analyseDataset(series, engine);
  const result: StoredAnalysisResult = {
    analysis,
    confidenceBands: confidenceBands(analysis, series, engine),
  };
  return {
    result: JSON.parse(JSON.stringify(result)) as unknown,
    options: JSON.parse(JSON.stringify({ analyst: options, engine })) as unknown,
    methodStatement: analysis.methodStatement.text,
  };
}

async function runAndRead(datasetId: number, body: Record<string, unknown>) {
  const response = await agent
    .post(`/api/datasets/${datasetId}/analyses`)
    .set('x-csrf-token', await tokenOf(agent))
    .send(body);
  expect(response.status).toBe(201);
  const [run] = await world.database.db
    .select()
    .from(analysisRuns)
    .where(eq(analysisRuns.id, response.body.runId as number));
  // The result as the product reads it back (either stored form: issue 16's compact form keeps
  // long number lists as doubles beside the JSON); options and method statement as stored.
  const read = await getAnalysisRun(world.database.db, world.organisationId, run!.id);
  return { ...run!, result: read.result as unknown };
}

async function oneAttributeStudy(fields: Partial<typeof studies.$inferInsert> = {}): Promise<Study> {
  const id = await seedStudy(world.database.db, context, {
    upperLimit: 105,
    massBalanceRole: null,
    additionalAttributes: [],
    workingOrder: 1,
    workingOrderReason: 'protocol CV-STB-2 §5 states first-order loss (invented)',
    ...fields,
  });
  const [study] = await world.database.db.select().from(studies).where(eq(studies.id, id));
  return study!;
}

describe('a study of one attribute', () => {
  it.each([
    ['the data deciding the order', {}],
    ['the analyst fixing first order at 90 %', { options: { order: 1, confidenceLevel: 0.9 } }],
  ])('stores the result the old run stored, to the last digit (%s)', async (_label, body) => {
    const study = await oneAttributeStudy();
    const series = assaySeries(null);
    const datasetId = await seedDataset(world.database.db, context, study.id, series);
    const run = await runAndRead(datasetId, body);
    const old = oldRun(series, study, (body as { options?: Record<string, unknown> }).options ?? {});
    expect(canonicalJson(run.result)).toBe(canonicalJson(old.result));
    expect(Object.keys(run.result as object).sort()).toEqual(['analysis', 'confidenceBands']);
    expect(canonicalJson(run.options)).toBe(canonicalJson(old.options));
    expect(run.methodStatement).toBe(old.methodStatement);
  });

  it('with an excluded point, stores what the old run stored', async () => {
    const study = await oneAttributeStudy({ workingOrder: null, workingOrderReason: '' });
    const series = assaySeries(null);
    const datasetId = await seedDataset(world.database.db, context, study.id, series);
    const reason = 'tablet chipped before assay (invented)';
    const run = await runAndRead(datasetId, {
      exclusions: [{ seriesId: 'CV-02 @ 25 °C', observationIndex: 3, reason }],
    });
    const marked = structuredClone(series);
    marked[1]!.observations[3]!.excluded = { reason };
    const old = oldRun(marked, study, {});
    expect(canonicalJson(run.result)).toBe(canonicalJson(old.result));
    expect(run.methodStatement).toBe(old.methodStatement);
    expect(run.methodStatement).toContain(reason);
  });

  it('applies the study’s rule to results below the limit and states it after the engine’s statement', async () => {
    // One attribute, an impurity reported "<LOQ" at months 0 and 3 of the long-term batches.
    const study = await oneAttributeStudy({
      attribute: 'Impurity B',
      direction: 'increasing',
      lowerLimit: null,
      upperLimit: 0.5,
      workingOrder: null,
      workingOrderReason: '',
      censoredRule: 'stated-value',
      censoredValue: 0.02,
    });
    const series = impuritySeries().map(({ attribute: _attribute, ...entry }) => ({
      ...entry,
      id: entry.id.replace('Impurity B · ', ''),
    }));
    const datasetId = await seedDataset(world.database.db, context, study.id, series);
    const run = await runAndRead(datasetId, {});
    const result = run.result as StoredAnalysisResult;
    expect(Object.keys(result).sort()).toEqual(['analysis', 'confidenceBands']);
    // Fitted at the stated value: every point used, none excluded.
    expect(result.analysis.methodStatement.data.excludedPoints).toEqual([]);
    expect(result.analysis.series[0]!.analysis!.n).toBe(6);
    // The same as the engine given the values the rule states.
    const stated = structuredClone(series);
    for (const entry of stated)
      for (const point of entry.observations) if (point.censored) point.value = 0.02;
    const old = oldRun(stated, study, {});
    expect(canonicalJson(result)).toBe(canonicalJson(old.result));
    expect(run.methodStatement).toBe(
      `${old.methodStatement}\n\nResults below the limit (Impurity B). 6 results reported below a limit ("<LOQ") were fitted at the value the study states, 0.02 % of label claim; they are shown with their text.`,
    );
    // Read back, the series show the stated value with the cell's text kept.
    const read = await agent.get(`/api/analyses/${run.id}`);
    expect(read.body.series[0].observations[0]).toMatchObject({ value: 0.02, censored: { text: '<LOQ' } });
  });
});
