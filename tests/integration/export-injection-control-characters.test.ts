import { parse } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import ExcelJS from 'exceljs';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { guardFormulaText } from '../../server/platform/export/formula-guard.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * The other half of the formula-injection attack (export-injection.test.ts covers = + - @): OWASP
 * "CSV Injection" (https://owasp.org/www-community/attacks/CSV_Injection) names a leading tab
 * (0x09) and carriage return (0x0D) as well, which some spreadsheets skip before reading `=`.
 * Here the batch names of an uploaded CSV and workbook, the study title and the exclusion reason
 * begin with tab or CR followed by a formula, and so does a CR inside a batch name. Every export
 * (analysis CSV, analysis workbook, audit-trail CSV) must hold no cell that begins with one of the
 * six characters unguarded, every stored text must come out exactly as the guard writes it, and
 * negative numbers must stay numbers. The CSV files are read as RFC 4180 by csv-parse.
 */

const TAB_FORMULA = '\t=HYPERLINK("http://example.invalid","tab")';
const CR_FORMULA = '\r+1+1';
const TAB_CR_AT = '\t\r@SUM(A1)';
const INNER_CR = 'B7\r=1+1';
const BATCHES = [TAB_FORMULA, CR_FORMULA, TAB_CR_AT, INNER_CR] as const;
const TITLE = '\r=cmd|"/c calc"!A1 long-term 25 °C';
const REASON = '\t-1+1 vial cracked at the 6-month pull (deviation DV-TAB-1).';
const MONTHS = [0, 3, 6, 9, 12];

const PLAIN_NUMBER = /^-?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
const liveFormula = (text: string) => /^[=+\-@\t\r]/.test(text) && !PLAIN_NUMBER.test(text);

let world: TestWorld;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let admin: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;
let studyId: number;

function binary(response: Response, callback: (error: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  response.on('data', (chunk: Buffer) => chunks.push(chunk));
  response.on('end', () => callback(null, Buffer.concat(chunks)));
}

function uploadRows(): (string | number)[][] {
  const rows: (string | number)[][] = [['Batch', 'Month', 'Assay']];
  BATCHES.forEach((batch, index) => {
    for (const month of MONTHS)
      rows.push([batch, month, 100.3 - index * 0.2 - 0.4 * month + (month % 2) * 0.1]);
  });
  return rows;
}

async function workbookUpload(): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  book.addWorksheet('Stability').addRows(uploadRows());
  return Buffer.from(await book.xlsx.writeBuffer());
}

const csvUpload = async () => Buffer.from(stringify(uploadRows(), { record_delimiter: '\r\n' }));

/** Uploads, imports and analyses; returns the run and the series names as the product stored them. */
async function analysedRun(bytes: Buffer, name: string) {
  const upload = await analyst
    .post(`/api/studies/${studyId}/uploads`)
    .set('x-csrf-token', token)
    .attach('file', bytes, name);
  expect(upload.status, name).toBe(201);
  const imported = await analyst
    .post(`/api/uploads/${upload.body.uploadId}/import`)
    .set('x-csrf-token', token)
    .send({
      mapping: {
        timeColumn: 'Month',
        timeUnit: 'month',
        valueColumn: 'Assay',
        valueUnit: '%',
        seriesColumn: 'Batch',
      },
    });
  expect(imported.status, name).toBe(201);
  const series = (imported.body.series as { id: string }[]).map((entry) => entry.id);
  expect(series).toHaveLength(BATCHES.length);
  const excluded = series.find((id) => id.includes('+1+1'))!;
  const run = await analyst
    .post(`/api/datasets/${imported.body.datasetId}/analyses`)
    .set('x-csrf-token', token)
    .send({
      options: { order: 1 },
      exclusions: [{ seriesId: excluded, observationIndex: 2, reason: REASON }],
    });
  expect(run.status, name).toBe(201);
  return { runId: run.body.runId as number, series };
}

async function csvCells(path: string, agent = analyst): Promise<string[][]> {
  const response = await agent.get(path);
  expect(response.status, path).toBe(200);
  return parse(response.text, { bom: true }) as string[][];
}

const liveCsvCells = (rows: string[][]) =>
  rows.flatMap((row, r) =>
    row.flatMap((cell, c) =>
      liveFormula(cell) ? [`row ${r + 1} column ${c + 1}: ${JSON.stringify(cell)}`] : [],
    ),
  );

function liveWorkbookCells(book: ExcelJS.Workbook): string[] {
  const found: string[] = [];
  for (const sheet of book.worksheets)
    sheet.eachRow({ includeEmpty: false }, (row) =>
      row.eachCell({ includeEmpty: false }, (cell) => {
        const where = `${sheet.name}!${cell.address}`;
        if (cell.type === ExcelJS.ValueType.Formula || cell.formula !== undefined)
          found.push(`${where} is a formula`);
        else if (cell.type === ExcelJS.ValueType.String && liveFormula(String(cell.value)))
          found.push(`${where}: ${JSON.stringify(cell.value)}`);
      }),
    );
  return found;
}

/** Every string cell of a workbook. */
const workbookTexts = (book: ExcelJS.Workbook) =>
  book.worksheets.flatMap((sheet) => {
    const texts: string[] = [];
    sheet.eachRow({ includeEmpty: false }, (row) =>
      row.eachCell({ includeEmpty: false }, (cell) => {
        if (cell.type === ExcelJS.ValueType.String) texts.push(String(cell.value));
      }),
    );
    return texts;
  });

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], admin: ['admin'] });
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await analyst.get('/')).text);
  const form = await analyst.get('/studies/new');
  const created = await analyst
    .post('/studies')
    .type('form')
    .send({
      _csrf: csrfFrom(form.text),
      title: TITLE,
      product: '\t@SUM(A1) 10 mg',
      attribute: 'Assay',
      unit: '%',
      direction: 'decreasing',
      lowerLimit: '90',
    });
  expect(created.status).toBe(303);
  studyId = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
});
afterAll(async () => {
  await world?.close();
});

describe.each([
  ['an uploaded workbook', 'control.xlsx', workbookUpload],
  ['an uploaded CSV', 'control.csv', csvUpload],
])('tab and carriage-return formulas from %s', (_source, fileName, upload) => {
  let runId: number;
  let series: string[];
  beforeAll(async () => {
    ({ runId, series } = await analysedRun(await upload(), fileName));
  });

  it('the analysis CSV has no live cell; each stored batch name comes out as the guard writes it; negatives stay numbers', async () => {
    const rows = await csvCells(`/api/analyses/${runId}/export.csv`);
    expect(liveCsvCells(rows)).toEqual([]);
    const header = rows[0]!;
    const exported = new Set(rows.slice(1).map((row) => row[header.indexOf('seriesId')]));
    for (const id of series) expect(exported, JSON.stringify(id)).toContain(guardFormulaText(id));
    // The formula text itself survives (as text), whatever leading white space the intake trimmed.
    expect([...exported].some((cell) => cell?.includes('=HYPERLINK('))).toBe(true);
    expect([...exported].some((cell) => cell?.includes('\r=1+1'))).toBe(true);
    const estimates = rows.slice(1).map((row) => row[header.indexOf('estimate')]!);
    expect(estimates.some((cell) => cell.startsWith('-') && PLAIN_NUMBER.test(cell))).toBe(true);
  });

  it('the analysis workbook has no formula and no live string cell; title, reason and batches are guarded text', async () => {
    const response = await analyst.get(`/api/analyses/${runId}/export.xlsx`).buffer(true).parse(binary);
    expect(response.status).toBe(200);
    const book = new ExcelJS.Workbook();
    await book.xlsx.load(response.body as unknown as ExcelJS.Buffer);
    expect(liveWorkbookCells(book)).toEqual([]);
    const texts = workbookTexts(book);
    // The study form trims white space, so the title is stored (and guarded) from its `=`.
    expect(texts).toContain(guardFormulaText(TITLE.trim()));
    expect(texts).toContain(guardFormulaText(REASON.trim()));
    // XML reads a carriage return inside text back as a line feed (XML 1.0 §2.11, end-of-line
    // handling), so a CR inside a name is compared as a line break.
    const lineEnds = (text: string) => text.replace(/\r\n?/g, '\n');
    for (const id of series)
      expect(texts.map(lineEnds), JSON.stringify(id)).toContain(lineEnds(guardFormulaText(id)));
    const numbers = book.worksheets.flatMap((sheet) => {
      const values: number[] = [];
      sheet.eachRow((row) =>
        row.eachCell((cell) => {
          if (typeof cell.value === 'number') values.push(cell.value);
        }),
      );
      return values;
    });
    expect(numbers.some((value) => value < 0)).toBe(true);
  });

  it('the audit-trail CSV has no live cell, and holds the formulas only inside JSON', async () => {
    const rows = await csvCells('/audit/export.csv', admin);
    expect(liveCsvCells(rows)).toEqual([]);
    const text = rows.flat().join('\n');
    expect(text).toContain(JSON.stringify(REASON.trim()).slice(1, -1));
    expect(text).toContain(JSON.stringify(TITLE.trim()).slice(1, -1));
  });
});
