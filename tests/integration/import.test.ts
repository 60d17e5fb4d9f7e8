import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { and, eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { canonicalJson } from '../../server/platform/audit/canonical-json.ts';
import { auditEvents, datasets, savedMappings, studies } from '../../server/platform/db/schema/index.ts';
import type { ColumnMappingInput } from '../../shared/intake/column-mapping.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

const FIXTURES = path.resolve(import.meta.dirname, '../fixtures');

let world: TestWorld;
let studyId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  const [study] = await world.database.db
    .insert(studies)
    .values({
      organisationId: world.organisationId,
      title: 'Import tests',
      product: 'Orvellin 250 mg (invented)',
      attribute: 'Assay',
      unit: '% of label claim',
      direction: 'decreasing',
      lowerLimit: 95,
      createdBy: world.users.analyst!.id,
    })
    .returning();
  studyId = study!.id;
  ({ agent: analyst } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password));
  token = csrfFrom((await analyst.get('/')).text);
});
afterAll(() => world.close());

async function workbook(fill: (book: ExcelJS.Workbook) => void): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  fill(book);
  return Buffer.from(await book.xlsx.writeBuffer());
}

async function uploaded(bytes: Buffer, name: string): Promise<number> {
  const response = await analyst
    .post(`/api/studies/${studyId}/uploads`)
    .set('x-csrf-token', token)
    .attach('file', bytes, name);
  expect(response.status).toBe(201);
  return response.body.uploadId as number;
}

const importWith = (uploadId: number, mapping: ColumnMappingInput, extra: Record<string, unknown> = {}) =>
  analyst
    .post(`/api/uploads/${uploadId}/import`)
    .set('x-csrf-token', token)
    .send({ mapping, ...extra });

const preview = (uploadId: number, mapping?: ColumnMappingInput) =>
  analyst.get(`/api/uploads/${uploadId}/preview`).query(mapping ? { mapping: JSON.stringify(mapping) } : {});

const datasetCount = () =>
  world.database.db.$count(datasets, eq(datasets.organisationId, world.organisationId));

const BASIC: ColumnMappingInput = {
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay',
  seriesColumn: 'Batch',
};

/** Asserts a 422 listing exactly these problem texts, and that no dataset was stored. */
async function expectProblems(uploadId: number, mapping: ColumnMappingInput, texts: string[]) {
  const before = await datasetCount();
  const response = await importWith(uploadId, mapping);
  expect(response.status).toBe(422);
  expect(response.body.error.message).toMatch(/nothing was stored/);
  expect((response.body.error.details as { text: string }[]).map((problem) => problem.text)).toEqual(texts);
  expect(await datasetCount()).toBe(before);
  return response;
}

describe('import of a mapped upload', () => {
  it('stores the dataset — series, mapping, point count, SHA-256 over the canonical JSON of the series — with an audit event', async () => {
    const uploadId = await uploaded(
      await workbook((book) => {
        book.addWorksheet('Sheet1').addRows([
          ['Batch', 'Month', 'Assay'],
          ['OR-2401', 6, 98.3],
          ['OR-2402', 0, 99.8],
          ['OR-2401', 0, 100.2],
          ['OR-2402', 6, 97.9],
          ['OR-2401', 3, 99.1],
          ['OR-2402', 3, 98.7],
        ]);
      }),
      'two-batches.xlsx',
    );
    const response = await importWith(uploadId, BASIC);
    expect(response.status).toBe(201);
    const [row] = await world.database.db
      .select()
      .from(datasets)
      .where(eq(datasets.id, response.body.datasetId));
    expect(row).toMatchObject({ uploadId, studyId, pointCount: 6, createdBy: world.users.analyst!.id });
    expect(row!.mapping).toMatchObject({
      sheet: 'Sheet1',
      timeColumn: 'Month',
      headerRow: 1,
      timeFormat: 'elapsed',
    });
    const series = row!.series as Series[];
    expect(series.map((entry) => entry.id)).toEqual(['OR-2401', 'OR-2402']);
    // Rows in any order: each series comes sorted by time.
    expect(series[0]!.observations.map((observation) => [observation.time, observation.value])).toEqual([
      [0, 100.2],
      [3, 99.1],
      [6, 98.3],
    ]);
    expect(series[0]!.observations[0]!.source).toEqual({ row: 4, cell: 'Sheet1!C4' });
    expect(row!.sha256).toBe(createHash('sha256').update(canonicalJson(series)).digest('hex'));
    expect(response.body.sha256).toBe(row!.sha256);
    expect(response.body.series[0]).toMatchObject({
      id: 'OR-2401',
      points: 3,
      distinctTimes: 3,
      firstTime: 0,
      lastTime: 6,
    });

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'dataset'),
          eq(auditEvents.recordId, String(row!.id)),
        ),
      );
    expect(event!.action).toBe('dataset.imported');
    expect(event!.afterValue).toMatchObject({ uploadId, sha256: row!.sha256, pointCount: 6 });
  });

  it('a workbook with problems in several cells reports every one with its cell reference and stores nothing', async () => {
    const uploadId = await uploaded(
      await workbook((book) => {
        const sheet = book.addWorksheet('Sheet1');
        sheet.addRows([
          ['Batch', 'Month', 'Assay'],
          ['OR-2401', 0, 100.2],
          ['OR-2401', 3, 'n/a'],
          ['OR-2401', 'six', 98.3],
          ['OR-2401', 9, 97.1],
          ['', 12, 96.4],
          ['OR-2401', 18, 'ninety-five'],
        ]);
      }),
      'several-problems.xlsx',
    );
    const response = await expectProblems(uploadId, BASIC, [
      'Sheet1!C3: "n/a" is not a number',
      'Sheet1!B4: "six" is not a number',
      'Sheet1!A6: no batch name given',
      'Sheet1!C7: "ninety-five" is not a number',
    ]);
    expect(response.body.error.message).toMatch(/4 problems/);
    // The preview's dry run shows the same list before any import is tried.
    const checked = await preview(uploadId, BASIC);
    expect(checked.body.check.ok).toBe(false);
    expect(checked.body.check.problems).toHaveLength(4);
  });

  it('formulas without stored values: the preview marks them and the import names each cell and its formula', async () => {
    const uploadId = await uploaded(
      await workbook((book) => {
        const sheet = book.addWorksheet('Sheet1');
        sheet.addRows([
          ['Month', 'Assay'],
          [0, 100.1],
          [3, 99.0],
          [6, 98.2],
        ]);
        sheet.getCell('B3').value = { formula: 'B2*0.99' } as ExcelJS.CellFormulaValue;
        sheet.getCell('B4').value = { formula: 'B2*0.98' } as ExcelJS.CellFormulaValue;
      }),
      'formulas.xlsx',
    );
    const shown = await preview(uploadId);
    expect(shown.body.sheets[0].rows[2][1]).toEqual({ text: '=B2*0.99', kind: 'formula-without-value' });
    const response = await importWith(uploadId, {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Assay',
    });
    expect(response.status).toBe(422);
    const texts = (response.body.error.details as { text: string }[]).map((problem) => problem.text);
    expect(texts).toHaveLength(2);
    expect(texts[0]).toMatch(/^Sheet1!B3: .*formula/i);
    expect(texts[1]).toMatch(/^Sheet1!B4: .*formula/i);
  });

  it('text in number columns and a missing time in a CSV: every cell named, nothing stored', async () => {
    const uploadId = await uploaded(
      readFileSync(path.join(FIXTURES, 'veltrazine-bad-cells.csv')),
      'veltrazine-bad-cells.csv',
    );
    await expectProblems(uploadId, BASIC, [
      `'veltrazine-bad-cells'!C3: "n/a" is not a number`,
      `'veltrazine-bad-cells'!B5: no time given for this value`,
    ]);
  });

  it('replicates at one time only: 422 naming the series and its cell (a single point is refused at upload: hostile-uploads.test.ts)', async () => {
    const single = await uploaded(Buffer.from('Month,Assay\n0,100.1\n0,100.3\n'), 'single.csv');
    await expectProblems(single, { timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' }, [
      'single!B2: series "Assay" has 2 results, all at time 0 month; a rate needs results at two or more different times; check that the time column "Month" holds the time of each pull',
    ]);
    // One batch only at time 0, one usable batch: kept, with a note about the unusable one.
    const mixed = await uploaded(
      readFileSync(path.join(FIXTURES, 'veltrazine-single-time.csv')),
      'veltrazine-single-time.csv',
    );
    const response = await importWith(mixed, BASIC);
    expect(response.status).toBe(201);
    expect(response.body.warnings.join('\n')).toMatch(/series "VZ-010" has 3 results, all at time 0/);
  });

  it('merged header cells: a header written once over two header rows names its column', async () => {
    const uploadId = await uploaded(
      await workbook((book) => {
        const sheet = book.addWorksheet('Results');
        sheet.getCell('A1').value = 'Month';
        sheet.mergeCells('A1:A2');
        sheet.getCell('B1').value = 'Assay results';
        sheet.mergeCells('B1:C1');
        sheet.getCell('B2').value = 'Assay (%)';
        sheet.getCell('C2').value = 'Analyst initials';
        sheet.addRows([
          [0, 100.0, 'QX'],
          [3, 99.2, 'QX'],
          [6, 98.1, 'QY'],
        ]);
      }),
      'merged.xlsx',
    );
    const shown = await preview(uploadId);
    expect(shown.body.sheets[0].merges).toEqual(expect.arrayContaining(['A1:A2', 'B1:C1']));
    const response = await importWith(uploadId, {
      headerRow: 2,
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Assay (%)',
    });
    expect(response.status).toBe(201);
    expect(response.body.pointCount).toBe(3);
  });

  it('repeated times are replicates: marked in the preview, all kept in the dataset', async () => {
    const uploadId = await uploaded(
      Buffer.from(
        'Batch,Month,Assay\nOR-1,0,100.1\nOR-1,0,99.9\nOR-1,3,99.0\nOR-1,3,98.8\nOR-1,6,98.1\nOR-2,6,97.7\nOR-2,0,100.0\n',
      ),
      'replicates.csv',
    );
    const checked = await preview(uploadId, BASIC);
    expect(checked.body.check).toMatchObject({
      ok: true,
      replicateRows: [2, 3, 4, 5],
      seriesCount: 2,
      pointCount: 7,
    });
    const response = await importWith(uploadId, BASIC);
    expect(response.body.series[0]).toMatchObject({ id: 'OR-1', points: 5, distinctTimes: 3 });
  });

  it('several sheets: the preview lists each with its dimensions; the mapping picks one; an unknown sheet is named', async () => {
    const uploadId = await uploaded(
      await workbook((book) => {
        book.addWorksheet('Cover').addRows([['Stability results, invented product'], ['Prepared for tests']]);
        const data = book.addWorksheet('40 C');
        data.addRows([
          ['Day', 'Content'],
          [new Date(Date.UTC(2025, 0, 1)), 100.3],
          [new Date(Date.UTC(2025, 0, 31)), 98.9],
          [new Date(Date.UTC(2025, 2, 2)), 97.2],
        ]);
      }),
      'sheets.xlsx',
    );
    const shown = await preview(uploadId);
    expect(
      shown.body.sheets.map((sheet: { name: string; rowCount: number; columnCount: number }) => [
        sheet.name,
        sheet.rowCount,
        sheet.columnCount,
      ]),
    ).toEqual([
      ['Cover', 2, 1],
      ['40 C', 4, 2],
    ]);
    // Dates shown as ISO text; the header guessed.
    expect(shown.body.sheets[1].rows[1][0]).toEqual({ text: '2025-01-01', kind: 'date' });
    expect(shown.body.sheets[1].headerGuess).toBe(1);
    const mapping: ColumnMappingInput = {
      sheet: '40 C',
      timeColumn: 'Day',
      timeFormat: 'datetime',
      timeUnit: 'd',
      valueColumn: 'Content',
    };
    const response = await importWith(uploadId, mapping);
    expect(response.status).toBe(201);
    expect(response.body.series[0]).toMatchObject({ firstTime: 0, lastTime: 60, timeUnit: 'd' });
    await expectProblems(uploadId, { ...mapping, sheet: 'Missing' }, [
      'no sheet named "Missing" (sheets: Cover, 40 C)',
    ]);
  });

  it('a European CSV — BOM, semicolons, decimal commas, rows shuffled, a blank line — reads correctly', async () => {
    const uploadId = await uploaded(
      readFileSync(path.join(FIXTURES, 'veltrazine-long-term-semicolon.csv')),
      'langzeit.csv',
    );
    const shown = await preview(uploadId);
    expect(shown.body.sheets[0].rows[0].map((cell: { text: string }) => cell.text)).toEqual([
      'Charge',
      'Lagerung °C',
      'Monat',
      'Gehalt %',
    ]);
    const response = await importWith(uploadId, {
      timeColumn: 'Monat',
      timeUnit: 'month',
      valueColumn: 'Gehalt %',
      seriesColumn: 'Charge',
      temperatureColumn: 'Lagerung °C',
    });
    expect(response.status).toBe(201);
    expect(response.body.pointCount).toBe(21);
    const [row] = await world.database.db
      .select()
      .from(datasets)
      .where(eq(datasets.id, response.body.datasetId));
    const first = (row!.series as Series[]).find((series) => series.id === 'VZ-003')!;
    expect(first.temperatureC).toBe(25);
    expect(first.observations.slice(0, 3).map((observation) => observation.value)).toEqual([
      100.4, 99.2, 98.2,
    ]);
  });

  it('a saved mapping is offered for the next file whose header row matches', async () => {
    const csv = 'Batch,Month,Assay\nOR-7,0,100.0\nOR-7,3,99.1\n';
    const first = await uploaded(Buffer.from(csv), 'first.csv');
    const response = await importWith(first, BASIC, { saveMappingAs: 'Monthly assay export' });
    expect(response.status).toBe(201);
    const [saved] = await world.database.db
      .select()
      .from(savedMappings)
      .where(eq(savedMappings.id, response.body.savedMappingId));
    expect(saved!.headerSignature).toEqual(['Batch', 'Month', 'Assay']);
    const next = await uploaded(Buffer.from('batch,month,assay\nOR-8,0,99.7\nOR-8,6,98.0\n'), 'next.csv');
    const offered = (await preview(next)).body.savedMappings;
    expect(offered.map((offer: { name: string }) => offer.name)).toContain('Monthly assay export');
    expect(
      offered.find((offer: { name: string }) => offer.name === 'Monthly assay export').mapping.sheet,
    ).toBe('next');
    const other = await uploaded(Buffer.from('Time (h),Conc\n0,1\n2,0.9\n'), 'other.csv');
    expect(
      (await preview(other)).body.savedMappings.map((offer: { name: string }) => offer.name),
    ).not.toContain('Monthly assay export');
  });

  it('an invalid mapping is a 400 naming the field; a reviewer may preview but not import', async () => {
    const uploadId = await uploaded(Buffer.from('Month,Assay\n0,100\n3,99\n'), 'fields.csv');
    const bad = await importWith(uploadId, {
      timeColumn: 'Month',
      timeUnit: 'fortnight',
      valueColumn: '',
    } as unknown as ColumnMappingInput);
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((detail: { field: string }) => detail.field)).toEqual([
      'mapping.timeUnit',
      'mapping.valueColumn',
    ]);
    const { agent: reviewer } = await signIn(
      world.app,
      world.users.reviewer!.email,
      world.users.reviewer!.password,
    );
    expect((await reviewer.get(`/api/uploads/${uploadId}/preview`)).status).toBe(200);
    const reviewerToken = csrfFrom((await reviewer.get('/')).text);
    const refused = await reviewer
      .post(`/api/uploads/${uploadId}/import`)
      .set('x-csrf-token', reviewerToken)
      .send({ mapping: { timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' } });
    expect(refused.status).toBe(403);
  });

  it('the mapping page renders the island for an analyst; the study page lists uploads and datasets', async () => {
    const uploadId = await uploaded(Buffer.from('Month,Assay\n0,100\n3,99\n'), 'page.csv');
    const page = await analyst.get(`/uploads/${uploadId}/map`);
    expect(page.status).toBe(200);
    expect(page.text).toContain(`data-island="column-mapping" data-upload-id="${uploadId}"`);
    const study = await analyst.get(`/studies/${studyId}`);
    expect(study.text).toContain('page.csv');
    expect(study.text).toContain('data-island="study-run-analysis"');
  });
});
