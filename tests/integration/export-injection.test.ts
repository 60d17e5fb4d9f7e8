import { parse } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import { eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { users } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Formula injection through the product's own API: text that arrives in an uploaded workbook or
 * CSV (batch names, hence series names), typed into the study form, or typed as an exclusion
 * reason must come out of every export inert. The rule is OWASP's, "CSV Injection"
 * (https://owasp.org/www-community/attacks/CSV_Injection): a cell a spreadsheet would read as a
 * formula begins with = + - @, tab or carriage return; the exports put one apostrophe in front.
 * The CSV files are read as RFC 4180 (https://www.rfc-editor.org/rfc/rfc4180) by csv-parse, the
 * workbooks by exceljs.
 */

const HYPERLINK = '=HYPERLINK("http://example.invalid","x")';
const PAYLOADS = [HYPERLINK, '+1+1', '@SUM(A1)', '-2+3'] as const;
const EXCLUSION_REASON = `${HYPERLINK} vial cracked at the 6-month pull (deviation DV-INJ-1).`;
const ANALYST_NAME = '-2+3 Analyst'; // as an administrator might type it on the invitation form
const MONTHS = [0, 3, 6, 9, 12];

let world: TestWorld;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let admin: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;
let studyId: number;

/** True when a spreadsheet would run the cell: it starts like a formula and is not a plain number. */
const PLAIN_NUMBER = /^-?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
const liveFormula = (text: string) => /^[=+\-@\t\r]/.test(text) && !PLAIN_NUMBER.test(text);

function binary(response: Response, callback: (error: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  response.on('data', (chunk: Buffer) => chunks.push(chunk));
  response.on('end', () => callback(null, Buffer.concat(chunks)));
}

/** The rows of the upload: each payload is a batch, sampled at five times, falling ~0.5 %/month. */
function uploadRows(): (string | number)[][] {
  const rows: (string | number)[][] = [['Batch', 'Month', 'Assay']];
  PAYLOADS.forEach((batch, index) => {
    for (const month of MONTHS)
      rows.push([batch, month, 100.4 - index * 0.2 - 0.5 * month + (month % 2) * 0.1]);
  });
  return rows;
}

async function workbookUpload(): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  // Plain strings: the uploader typed them; exceljs stores them as text, as Excel does for '=….
  book.addWorksheet('Stability').addRows(uploadRows());
  return Buffer.from(await book.xlsx.writeBuffer());
}

/** A CSV as another program writes it: RFC 4180 quoting, no guard of its own. */
const csvUpload = () => Buffer.from(stringify(uploadRows(), { record_delimiter: '\r\n' }));

async function analysedRun(bytes: Buffer, name: string): Promise<number> {
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
        valueUnit: '-5 %',
        seriesColumn: 'Batch',
      },
    });
  expect(imported.status, name).toBe(201);
  expect((imported.body.series as { id: string }[]).map((series) => series.id).sort()).toEqual(
    [...PAYLOADS].sort(),
  );
  const run = await analyst
    .post(`/api/datasets/${imported.body.datasetId}/analyses`)
    .set('x-csrf-token', token)
    .send({
      options: { order: 1 },
      exclusions: [{ seriesId: '+1+1', observationIndex: 2, reason: EXCLUSION_REASON }],
    });
  expect(run.status, name).toBe(201);
  return run.body.runId as number;
}

async function csvCells(path: string, agent = analyst): Promise<string[][]> {
  const response = await agent.get(path);
  expect(response.status, path).toBe(200);
  expect(response.headers['content-type']).toContain('text/csv');
  return parse(response.text, { bom: true, relax_column_count: false }) as string[][];
}

async function workbookAt(path: string): Promise<ExcelJS.Workbook> {
  const response = await analyst.get(path).buffer(true).parse(binary);
  expect(response.status, path).toBe(200);
  const book = new ExcelJS.Workbook();
  await book.xlsx.load(response.body as unknown as ExcelJS.Buffer);
  return book;
}

/** Every cell that would run as a formula, named by where it is (expected: none). */
function liveCsvCells(rows: string[][]): string[] {
  return rows.flatMap((row, r) =>
    row.flatMap((cell, c) => (liveFormula(cell) ? [`row ${r + 1} column ${c + 1}: ${cell}`] : [])),
  );
}

function liveWorkbookCells(book: ExcelJS.Workbook): string[] {
  const found: string[] = [];
  for (const sheet of book.worksheets) {
    sheet.eachRow({ includeEmpty: false }, (row) => {
      row.eachCell({ includeEmpty: false }, (cell) => {
        const where = `${sheet.name}!${cell.address}`;
        if (cell.type === ExcelJS.ValueType.Formula || cell.formula !== undefined)
          found.push(`${where} is a formula`);
        else if (cell.type === ExcelJS.ValueType.String && liveFormula(String(cell.value)))
          found.push(`${where}: ${String(cell.value)}`);
        else if (![ExcelJS.ValueType.String, ExcelJS.ValueType.Number].includes(cell.type))
          found.push(`${where} has cell type ${cell.type}`);
      });
    });
  }
  return found;
}

const columnOf = (sheet: ExcelJS.Worksheet, heading: string) =>
  (sheet.getRow(1).values as unknown[]).indexOf(heading);

/** The values of one column below its heading, an empty cell as null. */
function columnValues(sheet: ExcelJS.Worksheet, heading: string): unknown[] {
  const column = columnOf(sheet, heading);
  expect(column, `${sheet.name} has a column "${heading}"`).toBeGreaterThan(0);
  const values: unknown[] = [];
  for (let row = 2; row <= sheet.rowCount; row += 1) values.push(sheet.getCell(row, column).value ?? null);
  return values;
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], admin: ['admin'] });
  // Names are typed by an administrator on the invitation form; set directly to skip the mail round trip.
  await world.database.db
    .update(users)
    .set({ fullName: ANALYST_NAME })
    .where(eq(users.id, world.users.analyst!.id));
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await analyst.get('/')).text);
  const form = await analyst.get('/studies/new');
  const created = await analyst
    .post('/studies')
    .type('form')
    .send({
      _csrf: csrfFrom(form.text),
      title: HYPERLINK,
      product: '@SUM(A1)',
      attribute: '+1+1',
      unit: '-5 %',
      direction: 'decreasing',
      lowerLimit: '90',
      notes: '-2+3',
    });
  expect(created.status).toBe(303);
  studyId = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
});
afterAll(async () => {
  await world?.close();
});

describe.each([
  ['an uploaded workbook', 'injection.xlsx', workbookUpload],
  ['an uploaded CSV', 'injection.csv', async () => csvUpload()],
])('formula text from %s', (_source, fileName, upload) => {
  let runId: number;
  beforeAll(async () => {
    runId = await analysedRun(await upload(), fileName);
  });

  it('the analysis CSV holds it only as guarded text; numbers, negative ones too, stay plain numbers', async () => {
    const rows = await csvCells(`/api/analyses/${runId}/export.csv`);
    expect(liveCsvCells(rows)).toEqual([]);
    const header = rows[0]!;
    const series = new Set(rows.slice(1).map((row) => row[header.indexOf('seriesId')]));
    for (const payload of PAYLOADS) expect(series, payload).toContain(`'${payload}`);
    // The value unit "-5 %" is text: guarded where it stands alone, inert inside "(-5 %)/month".
    const units = new Set(rows.slice(1).map((row) => row[header.indexOf('unit')]));
    expect([...units]).toEqual(expect.arrayContaining(["'-5 %", '(-5 %)/month']));
    const estimates = rows.slice(1).map((row) => row[header.indexOf('estimate')]!);
    expect(estimates.some((cell) => cell.startsWith('-') && PLAIN_NUMBER.test(cell))).toBe(true);
  });

  it('the analysis workbook holds it only as guarded string cells, never as a formula, the same text as the CSV', async () => {
    const book = await workbookAt(`/api/analyses/${runId}/export.xlsx`);
    expect(liveWorkbookCells(book)).toEqual([]);

    const about = book.getWorksheet('About')!;
    const aboutValues = new Map<unknown, unknown>();
    for (let row = 2; row <= about.rowCount; row += 1)
      aboutValues.set(about.getCell(row, 1).value, about.getCell(row, 2).value);
    expect(aboutValues.get('Study')).toBe(`'${HYPERLINK}`);
    expect(aboutValues.get('Product')).toBe("'@SUM(A1)");
    expect(aboutValues.get('Attribute')).toBe("'+1+1 (-5 %)");
    expect(aboutValues.get('Run by')).toBe(`'${ANALYST_NAME}`);

    const data = book.getWorksheet('Data')!;
    expect(new Set(columnValues(data, 'Series'))).toEqual(new Set(PAYLOADS.map((payload) => `'${payload}`)));
    expect(columnValues(data, 'Exclusion reason')).toContain(`'${EXCLUSION_REASON}`);
    expect(new Set(columnValues(data, 'Value unit'))).toEqual(new Set(["'-5 %"]));

    const csv = await csvCells(`/api/analyses/${runId}/export.csv`);
    const results = book.getWorksheet('Results')!;
    const csvSeries = csv.slice(1).map((row) => row[csv[0]!.indexOf('seriesId')] || null);
    expect(columnValues(results, 'Series')).toEqual(csvSeries);
    const slopes = columnValues(book.getWorksheet('Linearised')!, 'Slope');
    expect(slopes.some((slope) => typeof slope === 'number' && slope < 0)).toBe(true);
  });

  it('the audit-trail export holds it only inside JSON or as guarded text', async () => {
    const rows = await csvCells('/audit/export.csv', admin);
    expect(liveCsvCells(rows)).toEqual([]);
    const header = rows[0]!;
    const labels = rows.slice(1).map((row) => row[header.indexOf('actor_label')]);
    expect(labels).toContain(`'${ANALYST_NAME}`);
    const text = rows.flat().join('\n');
    expect(text).toContain(JSON.stringify(EXCLUSION_REASON).slice(1, -1));
    expect(text).toContain('"title":"=HYPERLINK(');
  });
});
