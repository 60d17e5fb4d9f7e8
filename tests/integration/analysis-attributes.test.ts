import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analysisRuns } from '../../server/platform/db/schema/index.ts';
import type { StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import type { DatasetOptions } from '../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import {
  assaySeries,
  IMPURITY_B,
  impuritySeries,
  seedDataset,
  seedStudy,
  WATER,
  waterSeries,
} from './analysis-attributes-fixture.ts';
import { type Agent, tokenOf } from './study-flow-fixture.ts';

/**
 * Issue 15 §1: one analysis run evaluates every attribute of a study, each against its own
 * criterion (ICH Q1E Appendix A: each attribute separately; the shortest shelf life governs), with
 * results below the limit handled by the study's rule and the mass balance of assay and
 * degradation products. Runs go through the route the study page uses.
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

async function runThroughApi(datasetId: number, body: Record<string, unknown> = {}) {
  return agent
    .post(`/api/datasets/${datasetId}/analyses`)
    .set('x-csrf-token', await tokenOf(agent))
    .send(body);
}

async function storedRun(runId: number) {
  const [run] = await world.database.db.select().from(analysisRuns).where(eq(analysisRuns.id, runId));
  return {
    ...run!,
    result: run!.result as StoredAnalysisResult,
    options: run!.options as {
      engine: DatasetOptions;
      otherAttributes?: { attribute: string; engine: DatasetOptions }[];
    },
  };
}

const longTerm = (analysis: StoredAnalysisResult['analysis']) =>
  analysis.shelfLife!.find((condition) => condition.role === 'long-term')!;

describe('a study of three attributes (assay, a degradation product, water)', () => {
  let runId: number;
  let run: Awaited<ReturnType<typeof storedRun>>;

  beforeAll(async () => {
    const studyId = await seedStudy(world.database.db, context);
    const datasetId = await seedDataset(world.database.db, context, studyId, [
      ...assaySeries(),
      ...impuritySeries(),
      ...waterSeries(),
    ]);
    const response = await runThroughApi(datasetId);
    expect(response.status).toBe(201);
    runId = response.body.runId as number;
    run = await storedRun(runId);
  });

  it('analyses each attribute alone: the first in `analysis`, the others in `otherAttributes`, in study order', () => {
    const { result } = run;
    expect(result.analysis.series.map((entry) => entry.id)).toEqual([
      'Assay · CV-01 @ 25 °C',
      'Assay · CV-02 @ 25 °C',
      'Assay · CV-03 @ 25 °C',
      'Assay · CV-01 @ 40 °C',
    ]);
    expect(result.otherAttributes!.map((entry) => entry.attribute.name)).toEqual(['Impurity B', 'Water']);
    expect(
      result.otherAttributes![0]!.analysis.series.every((entry) => entry.id.startsWith('Impurity B · ')),
    ).toBe(true);
    expect(result.otherAttributes![1]!.analysis.series).toHaveLength(4);
    expect(result.otherAttributes![0]!.confidenceBands.length).toBeGreaterThan(0);
    expect(result.confidenceBands.every((band) => band.seriesId.startsWith('Assay · '))).toBe(true);
  });

  it('each attribute used its own criterion and direction; the declaration is the study’s', () => {
    expect(run.options.engine).toMatchObject({
      lowerLimit: 95,
      direction: 'decreasing',
      storageTemperatureC: 25,
    });
    expect(run.options.engine.upperLimit).toBeUndefined();
    const [impurity, water] = run.options.otherAttributes!;
    expect(impurity!.attribute).toBe('Impurity B');
    expect(impurity!.engine).toMatchObject({
      upperLimit: 0.5,
      direction: 'increasing',
      storageTemperatureC: 25,
    });
    expect(impurity!.engine.lowerLimit).toBeUndefined();
    expect(impurity!.engine.q1e).toEqual(run.options.engine.q1e);
    expect(water!.engine).toMatchObject({ upperLimit: 5, direction: 'increasing' });
    // The impurity's shelf life is where its confidence limit crosses its upper limit of 0.5.
    const impurityLongTerm = longTerm(run.result.otherAttributes![0]!.analysis);
    const limiting = impurityLongTerm.result!.lines.find(
      (line) => line.shelfLife === impurityLongTerm.result!.shelfLife,
    )!;
    expect(limiting.crossings).toEqual(
      expect.arrayContaining([expect.objectContaining({ acceptanceLimit: 'upper', limitValue: 0.5 })]),
    );
    expect(impurityLongTerm.result!.method.direction).toBe('increasing');
    // The assay's is against its lower limit of 95.
    const assayLines = longTerm(run.result.analysis).result!.lines;
    expect(assayLines.flatMap((line) => line.crossings.map((crossing) => crossing.limitValue))).not.toContain(
      0.5,
    );
    expect(assayLines[0]!.crossings.map((crossing) => crossing.acceptanceLimit)).toEqual(['lower']);
  });

  it('the study proposes the earliest shelf life and names the limiting attribute', () => {
    const verdict = run.result.studyShelfLife!;
    const assayProposal = longTerm(run.result.analysis).proposal;
    const impurityProposal = longTerm(run.result.otherAttributes![0]!.analysis).proposal;
    const waterProposal = longTerm(run.result.otherAttributes![1]!.analysis).proposal;
    expect(impurityProposal.proposedShelfLifeMonths).toBeLessThan(assayProposal.proposedShelfLifeMonths!);
    expect(impurityProposal.proposedShelfLifeMonths).toBeLessThan(waterProposal.proposedShelfLifeMonths!);
    // The impurity's estimate is below its Q1E allowance (18 months of data: up to 2X, not more than X + 12).
    expect(impurityProposal.limitedBy).toBe('statistical-estimate');
    expect(verdict.limitingAttributes).toEqual(['Impurity B']);
    expect(verdict.proposedShelfLifeMonths).toBe(impurityProposal.proposedShelfLifeMonths);
    expect(verdict.proposedShelfLife).toBe(impurityProposal.proposedShelfLife);
    expect(verdict.attributes.map((entry) => [entry.attribute.name, entry.proposedShelfLifeMonths])).toEqual([
      ['Assay', assayProposal.proposedShelfLifeMonths],
      ['Impurity B', impurityProposal.proposedShelfLifeMonths],
      ['Water', waterProposal.proposedShelfLifeMonths],
    ]);
    expect(verdict.statement).toContain(', set by Impurity B: the earliest of the 3 attributes');
  });

  it('results below the limit are excluded from the impurity’s fit by the study’s rule, with their reason', () => {
    const impurity = run.result.otherAttributes![0]!.analysis;
    const excluded = impurity.methodStatement.data.excludedPoints;
    expect(excluded).toHaveLength(6);
    expect(
      excluded.every(
        (point) =>
          point.reason === "reported below the limit (<LOQ): excluded from the fit by the study's rule",
      ),
    ).toBe(true);
    expect(impurity.series[0]!.analysis!.n).toBe(4);
    // The assay and water have none.
    expect(run.result.analysis.methodStatement.data.excludedPoints).toEqual([]);
  });

  it('checks the mass balance of the assay and the degradation product, counting "<LOQ" as 0', () => {
    const balance = run.result.massBalance!;
    expect(balance.assayAttribute).toBe('Assay');
    expect(balance.degradantAttributes).toEqual(['Impurity B']);
    expect(balance.series.map((entry) => [entry.batch, entry.temperatureC])).toEqual([
      ['CV-01', 25],
      ['CV-02', 25],
      ['CV-03', 25],
      ['CV-01', 40],
    ]);
    const first = balance.series[0]!;
    expect(first.points.map((point) => point.time)).toEqual([0, 3, 6, 9, 12, 18]);
    expect(first.points[0]!.degradants).toBe(0);
    expect(first.points[0]!.percentOfInitial).toBe(100);
    expect(first.trend!.lower).toBeLessThan(first.trend!.slope);
    expect(balance.statement).toContain("Impurity B's results below the limit count as 0");
  });

  it('writes one method statement: each attribute under its heading, then the study’s shelf life and the rules', () => {
    const paragraphs = run.methodStatement.split('\n\n');
    expect(paragraphs[0]).toBe('Attribute 1 of 3: Assay (% of label claim; lower limit 95; decreasing).');
    expect(run.methodStatement).toContain(run.result.analysis.methodStatement.text);
    expect(run.methodStatement).toContain(
      'Attribute 2 of 3: Impurity B (% of label claim; upper limit 0.5; increasing).',
    );
    expect(run.methodStatement).toContain(run.result.otherAttributes![0]!.analysis.methodStatement.text);
    expect(run.methodStatement).toContain('Attribute 3 of 3: Water (% w/w; upper limit 5; increasing).');
    expect(run.methodStatement).toContain(`Study shelf life. ${run.result.studyShelfLife!.statement}`);
    expect(run.methodStatement).toContain(run.result.massBalance!.statement);
    expect(paragraphs.at(-1)).toBe(
      'Results below the limit (Impurity B). 6 results reported below a limit ("<LOQ") were excluded from the fit by the study\'s rule; they are shown with their text.',
    );
  });

  it('fits Arrhenius to the formation rate of the rising attributes; the assay keeps its rate of loss', () => {
    // Impurity B rises 0.03 % per month at 25 °C and four times as fast at 40 °C (the fixture), so
    // its zero-order k is negative; the Arrhenius line goes through the formation rate −k.
    const impurity = run.result.otherAttributes![0]!.analysis;
    const arrhenius = impurity.arrhenius!;
    expect(arrhenius.rateSense).toBe('formation');
    expect(arrhenius.order).toBe(0);
    expect(arrhenius.orderSource).toBe('formation');
    expect(arrhenius.kUnit).toBe('(% of label claim)/month');
    expect(arrhenius.excludedSeries).toEqual([]);
    expect(arrhenius.rateConstants.map((point) => point.temperatureC)).toEqual([25, 40]);
    const [at25, at40] = arrhenius.rateConstants;
    const accelerated = impurity.series.find((entry) => entry.id === 'Impurity B · CV-01 @ 40 °C')!;
    const zeroOrder = accelerated.analysis!.models.find((model) => model.order === 0)!;
    expect(at40!.k).toBe(-zeroOrder.k!);
    expect(at25!.k).toBeGreaterThan(0.025);
    expect(at25!.k).toBeLessThan(0.035);
    expect(at40!.k / at25!.k).toBeGreaterThan(3.5);
    expect(at40!.k / at25!.k).toBeLessThan(4.5);
    // Two temperatures: the line is exact, Ea = R·ln(k40/k25)/(1/T25 − 1/T40) (Arrhenius law,
    // IUPAC Gold Book "Arrhenius equation"), and k at the 25 °C storage temperature is k25.
    const gasConstant = 8.31446261815324;
    const ea = (gasConstant * Math.log(at40!.k / at25!.k)) / (1 / 298.15 - 1 / 313.15);
    expect(Math.abs(arrhenius.fit!.activationEnergy - ea) / ea).toBeLessThan(1e-9);
    expect(Math.abs(arrhenius.prediction!.rateConstant - at25!.k) / at25!.k).toBeLessThan(1e-9);
    expect(arrhenius.prediction!.t90).toBeNull();
    expect(impurity.methodStatement.temperature).toContain('formation rate (the attribute increases)');
    expect(run.result.otherAttributes![1]!.analysis.arrhenius!.rateSense).toBe('formation');
    expect(run.result.otherAttributes![1]!.analysis.arrhenius!.fit).not.toBeNull();
    expect(run.result.analysis.arrhenius!.rateSense).toBe('loss');
    expect(run.result.analysis.arrhenius!.fit!.activationEnergy).toBeGreaterThan(0);
  });

  it('the page and the CSV name the rising attributes’ formation rate and why zero order; the assay keeps k', async () => {
    const why = 'zero order by rule: the formation rate of an attribute that increases';
    const page = await agent.get(`/analyses/${runId}`);
    expect(page.status).toBe(200);
    const text = page.text
      .replace(/<[^>]+>/g, ' ')
      .replace(/&#x27;|&#39;/g, "'")
      .replace(/&#x3D;/g, '=')
      .replace(/\s+/g, ' ');
    const impurity = text.slice(text.indexOf('Temperature dependence (Arrhenius): Impurity B'));
    expect(impurity).toContain(
      `Formation rates k_f = dC/dt of the zero-order law, in (% of label claim)/month (${why}).`,
    );
    expect(impurity).toContain('Formation rate k_f predicted at 25 °C');
    expect(impurity).toContain('R² of ln k_f against 1/T');
    const assayStart = text.indexOf('Temperature dependence (Arrhenius): Assay');
    const assay = text.slice(assayStart, text.indexOf('Series: Assay', assayStart));
    expect(assay).toContain('k predicted at 25 °C');
    expect(assay).not.toContain('formation');
    // From Impurity B to the end of the page (Impurity B, then Water: both rise).
    expect(impurity).not.toContain('lowest summed AICc');

    const csv = (await agent.get(`/api/analyses/${runId}/export.csv`)).text;
    const lines = csv.split('\r\n');
    expect(
      lines.some((line) => line.includes('Impurity B') && line.includes('Formation rate k_f at 40 °C')),
    ).toBe(true);
    expect(lines.some((line) => line.includes('Impurity B') && /,k at \d+ °C/.test(line))).toBe(false);
    expect(lines.some((line) => line.startsWith('Assay') && line.includes('k at 40 °C'))).toBe(true);
  });

  it('the run as read marks the censored points as the engine saw them', async () => {
    const response = await agent.get(`/api/analyses/${runId}`);
    expect(response.status).toBe(200);
    const series = response.body.series as Series[];
    const impurity = series.find((entry) => entry.id === 'Impurity B · CV-02 @ 25 °C')!;
    expect(impurity.observations[1]).toMatchObject({
      censored: { text: '<LOQ' },
      excluded: { reason: "reported below the limit (<LOQ): excluded from the fit by the study's rule" },
    });
    expect(series).toHaveLength(12);
  });

  it('excludes a point of any attribute: a new run where only that attribute changes', async () => {
    const response = await agent
      .post(`/api/analyses/${runId}/exclusions`)
      .set('x-csrf-token', await tokenOf(agent))
      .send({
        seriesId: 'Water · CV-02 @ 25 °C',
        observationIndex: 2,
        reason: 'balance out of calibration (invented)',
      });
    expect(response.status).toBe(201);
    const newer = await storedRun(response.body.runId as number);
    expect(newer.supersedesRunId).toBe(runId);
    expect(newer.exclusions).toEqual([
      expect.objectContaining({ seriesId: 'Water · CV-02 @ 25 °C', observationIndex: 2, time: 6 }),
    ]);
    const water = newer.result.otherAttributes![1]!.analysis;
    expect(water.methodStatement.data.excludedPoints).toEqual([
      expect.objectContaining({
        seriesId: 'Water · CV-02 @ 25 °C',
        reason: 'balance out of calibration (invented)',
      }),
    ]);
    expect(newer.result.analysis.series.map((entry) => entry.analysis!.n)).toEqual(
      run.result.analysis.series.map((entry) => entry.analysis!.n),
    );
    expect(newer.result.otherAttributes![0]!.analysis.methodStatement.data.excludedPoints).toHaveLength(6);

    const nowhere = await agent
      .post(`/api/analyses/${response.body.runId}/exclusions`)
      .set('x-csrf-token', await tokenOf(agent))
      .send({ seriesId: 'CV-02 @ 25 °C', observationIndex: 2, reason: 'a reason that is long enough' });
    expect(nowhere.status).toBe(400);
    expect(nowhere.body.error.details[0]).toMatchObject({
      field: 'seriesId',
      message: 'There is no series "CV-02 @ 25 °C".',
    });
  });
});

describe('what the run does when an attribute cannot be evaluated', () => {
  it('an attribute with no data in the dataset makes the study propose none, naming it', async () => {
    const studyId = await seedStudy(world.database.db, context);
    const datasetId = await seedDataset(world.database.db, context, studyId, [
      ...assaySeries(),
      ...impuritySeries(),
    ]);
    const response = await runThroughApi(datasetId);
    expect(response.status).toBe(201);
    const run = await storedRun(response.body.runId as number);
    const water = run.result.otherAttributes![1]!;
    expect(water.attribute).toEqual(WATER);
    expect(water.analysis.series).toEqual([]);
    const verdict = run.result.studyShelfLife!;
    expect(verdict.proposedShelfLife).toBeNull();
    expect(verdict.limitingAttributes).toEqual([]);
    expect(verdict.reason).toBe('Water proposes none: no data in this dataset.');
    expect(verdict.attributes[2]!.reason).toBe('No data in this dataset.');
    expect(run.methodStatement).toContain(
      'Attribute 3 of 3: Water (% w/w; upper limit 5; increasing).\n\nNo series of this attribute is in this dataset; it was not analysed.',
    );
  });

  it('without data for the first attribute, its analysis is of no series; series of an unlisted attribute are named', async () => {
    const studyId = await seedStudy(world.database.db, context);
    const colour = waterSeries().map((entry) => ({
      ...entry,
      id: entry.id.replace('Water', 'Colour'),
      attribute: 'Colour',
    }));
    const datasetId = await seedDataset(world.database.db, context, studyId, [
      ...impuritySeries(),
      ...waterSeries(),
      colour[0]!,
    ]);
    const response = await runThroughApi(datasetId);
    expect(response.status).toBe(201);
    const run = await storedRun(response.body.runId as number);
    expect(run.result.analysis.series).toEqual([]);
    expect(run.result.otherAttributes!.map((entry) => entry.analysis.series.length)).toEqual([4, 4]);
    expect(run.result.studyShelfLife!.reason).toBe('Assay proposes none: no data in this dataset.');
    // Nothing to balance: no batch has its assay measured.
    expect(run.result.massBalance!.series).toEqual([]);
    expect(run.methodStatement.split('\n\n').at(-1)).toBe(
      'Not analysed: Colour · CV-01 @ 25 °C (measures "Colour", which the study does not list).',
    );
  });

  it('an attribute the engine refuses is recorded with the reason and the run still stores', async () => {
    const studyId = await seedStudy(world.database.db, context, {
      additionalAttributes: [{ ...IMPURITY_B, censoredRule: 'stated-value', censoredValue: null }, WATER],
    });
    const datasetId = await seedDataset(world.database.db, context, studyId, [
      ...assaySeries(),
      ...impuritySeries(),
      ...waterSeries(),
    ]);
    const response = await runThroughApi(datasetId);
    expect(response.status).toBe(201);
    const run = await storedRun(response.body.runId as number);
    const reason = run.result.studyShelfLife!.attributes[1]!.reason!;
    expect(reason).toMatch(
      /^Not analysed: Impurity B: the study fits results below the limit at a stated value but states none/,
    );
    expect(run.result.otherAttributes![0]!.analysis.series).toEqual([]);
    expect(run.result.studyShelfLife!.proposedShelfLife).toBeNull();
    expect(run.result.otherAttributes![1]!.analysis.series).toHaveLength(4);
    expect(run.methodStatement).toContain(`${reason} The run was stored without this attribute's analysis.`);
  });

  it('the first attribute refused by the engine refuses the run (400) and stores nothing', async () => {
    const studyId = await seedStudy(world.database.db, context, {
      attribute: 'Impurity B',
      unit: '% of label claim',
      direction: 'increasing',
      lowerLimit: null,
      upperLimit: 0.5,
      censoredRule: 'stated-value',
      censoredValue: null,
      massBalanceRole: null,
      additionalAttributes: [],
    });
    const datasetId = await seedDataset(world.database.db, context, studyId, impuritySeries());
    const response = await runThroughApi(datasetId);
    expect(response.status).toBe(400);
    expect(response.body.error.message).toMatch(
      /^Impurity B: the study fits results below the limit at a stated value/,
    );
    const stored = await world.database.db
      .select()
      .from(analysisRuns)
      .where(eq(analysisRuns.studyId, studyId));
    expect(stored).toEqual([]);
  });
});
