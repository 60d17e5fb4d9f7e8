import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDemoDataset } from '../../server/demo/demo-study.ts';
import { formatSignificant } from '../../shared/figures/significant-figures.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
let agent: Awaited<ReturnType<typeof signIn>>['agent'];
let runId: number;
let pageHtml: string;
const EXCLUDED_REASON = 'Vial cracked at the 2-month pull (deviation DV-TEST-2).';

/** The numbers the screen shows: every `data-key`/`data-value` cell with its displayed text. */
function screenNumbers(html: string): Map<string, { value: number; text: string }> {
  const found = new Map<string, { value: number; text: string }>();
  const pattern = /<span class="tabular-nums" data-key="([^"]+)" data-value="([^"]*)">([^<]*)<\/span>/g;
  for (const match of html.matchAll(pattern)) {
    const [, key, value, text] = match;
    if (!key || value === '' || value === undefined) continue;
    found.set(decode(key), { value: Number(value), text: decode(text ?? '') });
  }
  return found;
}

function decode(text: string): string {
  return text
    .replaceAll('&amp;', '&')
    .replaceAll('&lt;', '<')
    .replaceAll('&gt;', '>')
    .replaceAll('&quot;', '"')
    .replaceAll('&#x27;', "'")
    .replaceAll('&#x3D;', '=')
    .replaceAll('&#x60;', '`');
}

function binary(response: Response, callback: (error: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  response.on('data', (chunk: Buffer) => chunks.push(chunk));
  response.on('end', () => callback(null, Buffer.concat(chunks)));
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  const { datasetId } = await createDemoDataset(world.database.db, {
    organisationId: world.organisationId,
    analystUserId: world.users.analyst!.id,
    analystName: 'Test analyst',
  });
  agent = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  const token = csrfFrom((await agent.get('/')).text);
  const created = await agent
    .post(`/api/datasets/${datasetId}/analyses`)
    .set('x-csrf-token', token)
    .send({
      options: { order: 1 },
      exclusions: [{ seriesId: 'QT-2402 @ 40 °C', observationIndex: 2, reason: EXCLUDED_REASON }],
    });
  expect(created.status).toBe(201);
  runId = created.body.runId;
  pageHtml = (await agent.get(`/analyses/${runId}`)).text;
});
afterAll(async () => {
  await world?.close();
});

describe('the exported workbook', () => {
  it('opens with exceljs and holds the same numbers as the screen, as numbers', async () => {
    const response = await agent.get(`/api/analyses/${runId}/export.xlsx`).buffer(true).parse(binary);
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toContain('spreadsheetml');
    expect(response.headers['content-disposition']).toContain(`rateledger-analysis-${runId}`);
    const workbook = new ExcelJS.Workbook();
    await workbook.xlsx.load(response.body as unknown as ExcelJS.Buffer);
    expect(workbook.worksheets.map((sheet) => sheet.name)).toEqual([
      'About',
      'Results',
      'Data',
      'Fits',
      'Linearised',
      'Verdicts',
      'Arrhenius and Q1E',
      'Shelf-life proposal',
      'Figure data',
      'Method statement',
    ]);

    const results = workbook.getWorksheet('Results')!;
    const header = (results.getRow(1).values as unknown[]).slice(1);
    const column = (name: string) => header.indexOf(name) + 1;
    const byKey = new Map<string, { estimate: unknown; digits: unknown }>();
    results.eachRow((row, rowNumber) => {
      if (rowNumber === 1) return;
      byKey.set(String(row.getCell(column('Key')).value), {
        estimate: row.getCell(column('Estimate')).value,
        digits: row.getCell(column('Significant figures shown')).value,
      });
    });

    const shown = screenNumbers(pageHtml);
    // The screen shows rate constants, half-lives, t90, times to limit, weights, Arrhenius and Q1E figures.
    expect(shown.size).toBeGreaterThan(100);
    for (const section of ['rate-law', 'derived', 'arrhenius', 'shelf-life', 'linearised']) {
      expect([...shown.keys()].some((key) => key.startsWith(`${section}|`))).toBe(true);
    }
    for (const [key, { value, text }] of shown) {
      const cell = byKey.get(key);
      expect(cell, `workbook row for ${key}`).toBeDefined();
      expect(typeof cell!.estimate, `${key} stored as a number`).toBe('number');
      expect(cell!.estimate, key).toBe(value);
      expect(text, key).toBe(formatSignificant(cell!.estimate as number, cell!.digits as number));
    }

    const data = workbook.getWorksheet('Data')!;
    let excludedRows = 0;
    data.eachRow((row, rowNumber) => {
      if (rowNumber === 1) return;
      expect(typeof row.getCell(5).value).toBe('number');
      expect(typeof row.getCell(7).value).toBe('number');
      if (row.getCell(9).value === 'no') {
        excludedRows += 1;
        expect(row.getCell(10).value).toBe(EXCLUDED_REASON);
      }
    });
    expect(excludedRows).toBe(1);
    expect(data.rowCount - 1).toBe(72);

    // The proposal of the long-term condition: the same number as the screen's, never above the estimate.
    const proposals = workbook.getWorksheet('Shelf-life proposal')!;
    const heads = (proposals.getRow(1).values as unknown[]).slice(1);
    const cell = (row: number, name: string) => proposals.getRow(row).getCell(heads.indexOf(name) + 1).value;
    expect(cell(2, 'Role')).toBe('long-term');
    const proposed = cell(2, 'Proposed shelf life, in the time unit');
    expect(typeof proposed).toBe('number');
    expect(pageHtml).toContain(`data-proposed-value="${proposed}"`);
    expect(proposed as number).toBeLessThanOrEqual(cell(2, 'Statistical estimate') as number);
    expect(cell(3, 'Proposed shelf life (months)')).toBeNull();

    const method = workbook.getWorksheet('Method statement')!;
    const text = (method.getColumn(1).values as unknown[])
      .filter((value) => typeof value === 'string')
      .join('\n');
    expect(text).toContain(EXCLUDED_REASON);
    expect(text).toContain('support, but do not replace, qualified judgement');
    expect(workbook.getWorksheet('Figure data')!.rowCount).toBeGreaterThan(1000);
  });

  it('the CSV holds the same tidy results', async () => {
    const response = await agent.get(`/api/analyses/${runId}/export.csv`);
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toContain('text/csv');
    const rows = parse(response.text, { columns: true, bom: true }) as Record<string, string>[];
    const shown = screenNumbers(pageHtml);
    const byKey = new Map(rows.map((row) => [row.key, row]));
    for (const [key, { value }] of shown) expect(Number(byKey.get(key)?.estimate), key).toBe(value);
  });

  it('a reviewer may download; an unknown run is a clean 404', async () => {
    const reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
      .agent;
    expect((await reviewer.get(`/api/analyses/${runId}/export.csv`)).status).toBe(200);
    const missing = await reviewer.get('/api/analyses/999999999/export.xlsx');
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toContain('no analysis');
  });
});
