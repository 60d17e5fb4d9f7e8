import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import { MOLAR_GAS_CONSTANT } from '../../shared/kinetics/temperature/physical-constants.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { type Agent, importUpload, runThroughApi, studyThroughForm, tokenOf } from './study-flow-fixture.ts';

/**
 * Issue 12 §1, the headline case, through the product's doors (study form, upload, import, run,
 * analysis page, CSV export): 9 months of long-term data whose statistical estimate is about 34
 * months. ICH Q1E Appendix A / §2.4.1.2.2: room temperature, no significant change at accelerated,
 * statistics performed and supporting data → up to 2X, not more than X + 12 → 18 months; nothing
 * declared → the most conservative branch, no extrapolation → X = 9 months.
 *
 * Invented data ("Pellorine", as in server/cli/fit.test.ts): three batches at 25 °C losing 0.137 %
 * per month over 0–9 months, one batch at 40 °C losing 0.5 % per month, fixed scatter.
 */
const SCATTER = [0.12, -0.1, 0.08, -0.06, 0.1];
const CSV = [
  'Batch,Temperature (°C),Month,Assay (% label claim)',
  ...[100.2, 100.0, 100.4].flatMap((start, batch) =>
    [0, 3, 6, 9].map(
      (month, i) =>
        `PL-250${batch + 1},25,${month},${(start - 0.137 * month + (SCATTER[(i + batch) % 5] ?? 0)).toFixed(2)}`,
    ),
  ),
  ...[0, 1, 2, 3, 6].map(
    (month, i) => `PL-2501,40,${month},${(100.2 - 0.5 * month + (SCATTER[(i + 3) % 5] ?? 0)).toFixed(2)}`,
  ),
].join('\n');

const PELLORINE_STUDY = {
  title: 'Pellorine long-term (invented)',
  product: 'Pellorine 5 mg tablets (invented)',
  upperLimit: '',
  lowerLimit: '95',
  batches: 'PL-2501, PL-2502, PL-2503',
};
const DECLARED = {
  storageCategory: 'room-temperature',
  acceleratedTemperatureC: '40',
  acceleratedChange: 'none',
  supportingData: 'yes',
  declarationBasis: 'Accelerated study report AR-7 (invented)',
};

function binary(response: Response, callback: (error: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  response.on('data', (chunk: Buffer) => chunks.push(chunk));
  response.on('end', () => callback(null, Buffer.concat(chunks)));
}

let world: TestWorld;
let agent: Agent;

async function runFor(fields: Record<string, string>) {
  const studyId = await studyThroughForm(agent, { ...PELLORINE_STUDY, ...fields });
  const upload = await agent
    .post(`/api/studies/${studyId}/uploads`)
    .set('x-csrf-token', await tokenOf(agent))
    .attach('file', Buffer.from(CSV, 'utf8'), 'pellorine-9-months.csv');
  expect(upload.status).toBe(201);
  const imported = await importUpload(agent, upload.body.uploadId as number);
  expect(imported.status).toBe(201);
  const runId = await runThroughApi(agent, imported.body.datasetId as number);
  const page = await agent.get(`/analyses/${runId}`);
  expect(page.status).toBe(200);
  const json = await agent.get(`/api/analyses/${runId}`);
  return { runId, studyId, html: page.text, json: json.body };
}

/** The analysis of a run as the API returns it (the stored result). */
function analysisOf(body: unknown): StoredAnalysisResult['analysis'] {
  const record = body as { result?: StoredAnalysisResult; analysis?: StoredAnalysisResult['analysis'] };
  return (record.result?.analysis ?? record.analysis)!;
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  agent = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
});
afterAll(async () => {
  await world?.close();
});

describe('9 months of data, statistical estimate ~34 months (ICH Q1E Appendix A, §2.4.1.2.2)', () => {
  it('with the facts declared on the study form, proposes 18 months (2X) and says the estimate runs past the allowance', async () => {
    const { html, json } = await runFor(DECLARED);
    const analysis = analysisOf(json);
    const longTerm = analysis.shelfLife!.find((condition) => condition.temperatureC === 25)!;
    expect(longTerm.role).toBe('long-term');
    expect(longTerm.result!.shelfLife).toBeGreaterThan(30);
    expect(longTerm.result!.shelfLife).toBeLessThan(38);
    const proposal = longTerm.proposal;
    expect(proposal.proposedShelfLifeMonths).toBe(18);
    expect(proposal.proposedShelfLife).toBeLessThanOrEqual(18);
    expect(proposal.proposedShelfLife).toBeLessThanOrEqual(longTerm.result!.shelfLife!);
    expect(proposal.estimateExceedsLimit).toBe(true);
    expect(proposal.extrapolationLimit).toMatchObject({
      value: 18,
      rule: 'up to 2X, not more than X + 12 months',
      branch: 'room-temperature.statistics-and-supporting-data',
    });
    // The one fact the form left unstated is named as an assumption.
    expect(proposal.extrapolationLimit.assumptions).toEqual([
      expect.stringMatching(/^Little or no change and variability not stated/),
    ]);
    // The screen says it in plain words.
    expect(html).toMatch(/runs past what ICH Q1E allows from 9 months of long-term data/);
    expect(html).toContain('up to 2X, not more than X + 12 months');
    expect(html).toMatch(/Little or no change and variability not stated/);
  });

  it('with nothing declared, proposes no more than X = 9 months and names every assumption', async () => {
    const { runId, html, json } = await runFor({});
    const analysis = analysisOf(json);
    const longTerm = analysis.shelfLife!.find((condition) => condition.temperatureC === 25)!;
    const proposal = longTerm.proposal;
    expect(proposal.proposedShelfLifeMonths).toBe(9);
    expect(proposal.proposedShelfLife).toBeLessThanOrEqual(9);
    expect(proposal.extrapolationLimit.branch).toBe('storage-not-stated');
    expect(proposal.extrapolationLimit.assumptions.join(' ')).toMatch(/Storage category .* not stated/);
    expect(html).toMatch(/Storage category \(room temperature, refrigerated, frozen\) not stated/);
    // The exported workbook's proposal sheet carries the same proposal as the screen.
    const xlsx = await agent.get(`/api/analyses/${runId}/export.xlsx`).buffer(true).parse(binary);
    expect(xlsx.status).toBe(200);
    const workbook = new ExcelJS.Workbook();
    await workbook.xlsx.load(xlsx.body as unknown as ExcelJS.Buffer);
    const sheet = workbook.getWorksheet('Shelf-life proposal')!;
    const header = Array.from(sheet.getRow(1).values as unknown[], (value) => String(value ?? ''));
    const proposedColumn = header.findIndex((text) => /^Proposed shelf life\b(?!, in)/.test(text));
    expect(proposedColumn, header.join(' | ')).toBeGreaterThan(0);
    const proposedCells = sheet.getColumn(proposedColumn).values.filter((value) => typeof value === 'number');
    expect(proposedCells).toEqual([9]);
    // The CSV holds the plausible laws and the Eyring rows the screen shows.
    const csv = await agent.get(`/api/analyses/${runId}/export.csv`);
    expect(csv.status).toBe(200);
    const records = parse(csv.text.replace(/^\uFEFF/, ''), {
      columns: true,
      skip_empty_lines: true,
    }) as Record<string, string>[];
    const sections = new Set(records.map((record) => record.section));
    expect([...sections]).toContain('plausible');
    expect(records.some((record) => record.key?.endsWith('|enthalpy-of-activation'))).toBe(true);
  });
});

describe('no dead ends: a series whose order is not named, and a working order from the study', () => {
  it('shows each plausible law and the model-averaged t90 on the page (Burnham & Anderson 2002 §4.3)', async () => {
    const { html, json } = await runFor(DECLARED);
    const analysis = analysisOf(json);
    const series = analysis.series.find((result) => result.temperatureC === 25)!.analysis!;
    expect(series.reportedOrder).toBeNull();
    expect(series.plausible!.laws.length).toBeGreaterThanOrEqual(2);
    expect(html).toContain('Plausible laws (Akaike weight ≥ 0.1 or ΔAICc ≤ 2)');
    expect(html).toContain('Model-averaged (unconditional interval)');
    const averaged = series.plausible!.modelAveraged.t90;
    if (averaged.estimate !== null) expect(html).toContain(`data-value="${averaged.estimate}"`);
    else expect(html).toContain(averaged.reason);
    // The Arrhenius section warns that no series named an order.
    expect(analysis.warnings.map((warning) => warning.code)).toContain('no-order-named');
    expect(html).toMatch(/No series named an order; the rate constants are of/);
  });

  it('declared on the study form, the working order is used where the data cannot tell and labelled so', async () => {
    const { html, json } = await runFor({
      ...DECLARED,
      workingOrder: '0',
      workingOrderReason: 'protocol PL-STB-1 §4 states zero-order loss (invented)',
    });
    const analysis = analysisOf(json);
    const series = analysis.series.find((result) => result.temperatureC === 25)!.analysis!;
    expect(series.orderSource).toBe('study');
    expect(series.reportedOrder).toBe(0);
    expect(html).toContain('working order from the study: protocol PL-STB-1 §4 states zero-order loss');
    expect(analysis.arrhenius!.orderSource).toBe('study');
    expect(html).not.toMatch(/zero order \(chosen\)/);
  });

  it('refuses a working order without its reason, beside the field', async () => {
    const response = await agent
      .post('/studies')
      .type('form')
      .send({
        _csrf: await tokenOf(agent),
        ...PELLORINE_STUDY,
        title: 'x',
        product: 'y',
        attribute: 'Assay',
        unit: '%',
        direction: 'decreasing',
        workingOrder: '1',
      });
    expect(response.status).toBe(400);
    expect(response.text).toContain('Give the reason for the working order');
  });
});

describe('Eyring joins Arrhenius on the analysis page', () => {
  it('shows ΔH‡ and ΔS‡, with ΔH‡ = Ea − R·T for the two temperatures (Eyring 1935; textbook relation Ea = ΔH‡ + RT)', async () => {
    const { html, json } = await runFor(DECLARED);
    const analysis = analysisOf(json);
    const arrhenius = analysis.arrhenius!;
    const ea = arrhenius.fit!.activationEnergy;
    const deltaH = arrhenius.eyring!.fit!.enthalpyOfActivation.estimate;
    // Two temperatures: ln(k/T) against 1/T has slope(ln k) − Δln T/Δ(1/T), so exactly
    // ΔH‡ = Ea − R·T* with T* = ln(T₂/T₁)/(1/T₁ − 1/T₂) (derived from the two lines; common practice).
    const [t1, t2] = arrhenius.rateConstants.map((point) => point.temperatureC + 273.15) as [number, number];
    const tStar = Math.log(t2 / t1) / (1 / t1 - 1 / t2);
    expect(deltaH).toBeCloseTo(ea - MOLAR_GAS_CONSTANT * tStar, 6);
    // …within 0.1 % of Ea − R·T̄ at the mean temperature (the textbook form).
    expect(Math.abs(deltaH - (ea - MOLAR_GAS_CONSTANT * ((t1 + t2) / 2)))).toBeLessThan(1e-3 * ea);
    expect(html).toContain('Enthalpy of activation ΔH‡ (Eyring)');
    expect(html).toContain('Entropy of activation ΔS‡ (Eyring)');
    expect(html).toContain(`data-value="${deltaH / 1000}"`);
  });

  it("shows the Q10 over 25 → 35 °C implied by Ea, equal to the rate ratio read off the two-point Arrhenius line (van 't Hoff 1884; Q10 = k(θ+10)/k(θ))", async () => {
    const { html, json } = await runFor(DECLARED);
    const arrhenius = analysisOf(json).arrhenius!;
    const q10 = arrhenius.q10!;
    expect(q10.fromC).toBe(25);
    expect(q10.toC).toBe(35);
    // Two points fix the line: ln k(T) = ln k₁ + ln(k₂/k₁)·(1/T₁ − 1/T)/(1/T₁ − 1/T₂), so
    // Q10 = k(308.15 K)/k(298.15 K) = (k₂/k₁)^((1/T₁ − 1/308.15)/(1/T₁ − 1/T₂)) (common practice).
    const [p1, p2] = arrhenius.rateConstants;
    if (!p1 || !p2) throw new Error('expected two temperatures');
    const [t1, t2] = [p1.temperatureC + 273.15, p2.temperatureC + 273.15];
    const ratio = (p2.k / p1.k) ** ((1 / t1 - 1 / 308.15) / (1 / t1 - 1 / t2));
    expect(q10.estimate).toBeCloseTo(ratio, 10);
    expect(q10.estimate).toBeGreaterThan(1);
    // Two temperatures leave no degrees of freedom: no interval, and the row says why.
    expect(q10.interval).toBeNull();
    expect(html).toContain('Q10 over 25 → 35 °C (from Ea)');
    expect(html).toContain(`data-value="${q10.estimate}"`);
  });
});
