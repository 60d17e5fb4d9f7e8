// Uploads holding several attributes of a study (issue 15 §1): the wide layout (one column per
// attribute) as CSV, the long layout (an attribute-name column) as xlsx, censored results
// ("<LOQ", "< 0,05") kept with their text, and the 400s for attribute names the study lacks.
// Data invented: "Orvellin 250 mg" and batches OR-… are fictional. The studies are written to the
// database directly (additional_attributes set), not through the study form.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { datasets, studies } from '../../server/platform/db/schema/index.ts';
import type { ColumnMappingInput } from '../../shared/intake/column-mapping.ts';
import type { StudyAttribute } from '../../shared/kinetics/stability/study-attributes.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { VELTRAZINE_MAPPING } from './study-flow-fixture.ts';

const FIXTURES = path.resolve(import.meta.dirname, '../fixtures');

let world: TestWorld;
let studyId: number;
let singleStudyId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

const IMPURITY_B: StudyAttribute = {
  name: 'Impurity B',
  unit: '% area',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 0.5,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: 'degradant',
};

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  const base = {
    organisationId: world.organisationId,
    product: 'Orvellin 250 mg (invented)',
    attribute: 'Assay',
    unit: '% of label claim',
    direction: 'decreasing' as const,
    lowerLimit: 95,
    createdBy: world.users.analyst!.id,
  };
  const [study] = await world.database.db
    .insert(studies)
    .values({
      ...base,
      title: 'Two attributes',
      massBalanceRole: 'assay',
      additionalAttributes: [IMPURITY_B],
    })
    .returning();
  studyId = study!.id;
  const [single] = await world.database.db
    .insert(studies)
    .values({ ...base, title: 'One attribute' })
    .returning();
  singleStudyId = single!.id;
  ({ agent: analyst } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password));
  token = csrfFrom((await analyst.get('/')).text);
});
afterAll(() => world.close());

async function uploaded(bytes: Buffer, name: string, study = studyId): Promise<number> {
  const response = await analyst
    .post(`/api/studies/${study}/uploads`)
    .set('x-csrf-token', token)
    .attach('file', bytes, name);
  expect(response.status).toBe(201);
  return response.body.uploadId as number;
}

const importWith = (uploadId: number, mapping: ColumnMappingInput) =>
  analyst.post(`/api/uploads/${uploadId}/import`).set('x-csrf-token', token).send({ mapping });

const datasetCount = () =>
  world.database.db.$count(datasets, eq(datasets.organisationId, world.organisationId));

async function storedSeries(datasetId: number): Promise<Series[]> {
  const [row] = await world.database.db.select().from(datasets).where(eq(datasets.id, datasetId));
  return row!.series as Series[];
}

const WIDE_CSV = [
  'Batch;Month;Assay (%);Impurity B (%)',
  'OR-2401;0;100,2;<LOQ',
  'OR-2401;3;99,4;< 0,05',
  'OR-2401;6;98,7;0,09',
  'OR-2402;0;100,0;<LOQ',
  'OR-2402;3;99,0;0,07',
  'OR-2402;6;98,1;0,12',
].join('\n');

const WIDE_MAPPING: ColumnMappingInput = {
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay (%)',
  valueUnit: '% of label claim',
  valueAttribute: 'assay',
  moreValueColumns: [{ column: 'Impurity B (%)', attribute: 'IMPURITY B', unit: '% area' }],
  seriesColumn: 'Batch',
};

describe('import of an upload holding two attributes', () => {
  it('stores one column per attribute as series with the study spelling, prefixed ids, units and censored text', async () => {
    const uploadId = await uploaded(Buffer.from(WIDE_CSV), 'two-attributes.csv');
    const response = await importWith(uploadId, WIDE_MAPPING);
    expect(response.status).toBe(201);
    expect(
      response.body.series.map((entry: { id: string; attribute?: string }) => [entry.id, entry.attribute]),
    ).toEqual([
      ['Assay · OR-2401', 'Assay'],
      ['Assay · OR-2402', 'Assay'],
      ['Impurity B · OR-2401', 'Impurity B'],
      ['Impurity B · OR-2402', 'Impurity B'],
    ]);
    const series = await storedSeries(response.body.datasetId);
    expect(series.map((entry) => [entry.id, entry.attribute, entry.valueUnit, entry.batch])).toEqual([
      ['Assay · OR-2401', 'Assay', '% of label claim', 'OR-2401'],
      ['Assay · OR-2402', 'Assay', '% of label claim', 'OR-2402'],
      ['Impurity B · OR-2401', 'Impurity B', '% area', 'OR-2401'],
      ['Impurity B · OR-2402', 'Impurity B', '% area', 'OR-2402'],
    ]);
    expect(
      series[2]!.observations.map((observation) => [
        observation.time,
        observation.value,
        observation.censored,
      ]),
    ).toEqual([
      [0, 0, { text: '<LOQ' }],
      [3, 0.05, { limit: 0.05, text: '< 0,05' }],
      [6, 0.09, undefined],
    ]);
    expect(series[2]!.observations[0]!.source).toEqual({ cell: "'two-attributes'!D2", row: 2 });
    expect(response.body.pointCount).toBe(12);
  });

  it('stores an attribute-name column (xlsx) the same way', async () => {
    const book = new ExcelJS.Workbook();
    book.addWorksheet('Results').addRows([
      ['Batch', 'Month', 'Test', 'Result'],
      ['OR-2401', 0, 'Assay', 100.2],
      ['OR-2401', 0, 'Impurity B', '<LOQ'],
      ['OR-2401', 3, 'assay', 99.4],
      ['OR-2401', 3, 'Impurity B', 0.06],
    ]);
    const uploadId = await uploaded(Buffer.from(await book.xlsx.writeBuffer()), 'long.xlsx');
    const response = await importWith(uploadId, {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Result',
      attributeColumn: 'Test',
      seriesColumn: 'Batch',
    });
    expect(response.status).toBe(201);
    const series = await storedSeries(response.body.datasetId);
    expect(series.map((entry) => [entry.id, entry.attribute, entry.observations.length])).toEqual([
      ['Assay · OR-2401', 'Assay', 2],
      ['Impurity B · OR-2401', 'Impurity B', 2],
    ]);
    // One value column holds both attributes: each series takes its attribute's unit from the study.
    expect(series.map((entry) => entry.valueUnit)).toEqual(['% of label claim', '% area']);
    expect(series[1]!.observations[0]).toMatchObject({ censored: { text: '<LOQ' }, value: 0 });
  });

  it('refuses with 400 an attribute of the mapping the study does not have, naming the field and the attributes; nothing stored', async () => {
    const uploadId = await uploaded(Buffer.from(WIDE_CSV), 'two-attributes-again.csv');
    const before = await datasetCount();
    const response = await importWith(uploadId, {
      ...WIDE_MAPPING,
      moreValueColumns: [{ column: 'Impurity B (%)', attribute: 'Impurity C' }],
    });
    expect(response.status).toBe(400);
    expect(response.body.error.message).toMatch(/does not have; nothing was stored/);
    expect((response.body.error.details as { text: string }[]).map((problem) => problem.text)).toEqual([
      'mapping field moreValueColumns[0].attribute: the value column "Impurity B (%)" is matched to "Impurity C", which is not an attribute of this study: the study\'s attributes are Assay and Impurity B',
    ]);
    expect(await datasetCount()).toBe(before);
    // The preview's check says the same, so the mapping screen shows it before an import.
    const preview = await analyst.get(`/api/uploads/${uploadId}/preview`).query({
      mapping: JSON.stringify({
        ...WIDE_MAPPING,
        moreValueColumns: [{ column: 'D', attribute: 'Impurity C' }],
      }),
    });
    expect(preview.status).toBe(200);
    expect(preview.body.check.ok).toBe(false);
    expect(preview.body.check.problems[0].text).toMatch(
      /^mapping field moreValueColumns\[0\]\.attribute: .*"Impurity C"/,
    );
  });

  it('refuses with 400 an attribute cell the study does not have, naming the cell; nothing stored', async () => {
    const csv = ['Month,Test,Result', '0,Assay,100.1', '3,Assay,99.2', '0,Water,2.1', '3,Water,2.4'].join(
      '\n',
    );
    const uploadId = await uploaded(Buffer.from(csv), 'water.csv');
    const before = await datasetCount();
    const response = await importWith(uploadId, {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Result',
      attributeColumn: 'Test',
    });
    expect(response.status).toBe(400);
    expect((response.body.error.details as { text: string }[]).map((problem) => problem.text)).toEqual([
      'water!B4: "Water" is not an attribute of this study (2 rows name it, the first here): the study\'s attributes are Assay and Impurity B; correct the cells or the study\'s attributes',
    ]);
    expect(await datasetCount()).toBe(before);
  });

  it('refuses with 400 an attribute named twice and both layouts at once, naming the fields', async () => {
    const uploadId = await uploaded(Buffer.from(WIDE_CSV), 'two-attributes-third.csv');
    const twice = await importWith(uploadId, {
      ...WIDE_MAPPING,
      moreValueColumns: [{ column: 'Impurity B (%)', attribute: 'Assay' }],
    });
    expect(twice.status).toBe(400);
    expect(twice.body.error.details).toEqual([
      {
        field: 'mapping.moreValueColumns.0.attribute',
        message:
          'The attribute "Assay" is already given to another value column; each attribute has one column.',
      },
    ]);
    const both = await importWith(uploadId, { ...WIDE_MAPPING, attributeColumn: 'Batch' });
    expect(both.status).toBe(400);
    expect(both.body.error.details[0].field).toBe('mapping.attributeColumn');
  });

  it('answers a column mapped twice with 422 naming its header cell', async () => {
    const uploadId = await uploaded(Buffer.from(WIDE_CSV), 'two-attributes-fourth.csv');
    const response = await importWith(uploadId, {
      ...WIDE_MAPPING,
      moreValueColumns: [{ column: 'C', attribute: 'Impurity B' }],
    });
    expect(response.status).toBe(422);
    expect(response.body.error.details.map((problem: { text: string }) => problem.text)).toEqual([
      `'two-attributes-fourth'!C1: column C ("Assay (%)") is mapped twice, as the value column of assay and as the value column of Impurity B: give each column one role`,
    ]);
  });
});

describe('a study of one attribute', () => {
  it('imports the sample upload without attributes exactly as before (same series, same hash)', async () => {
    const uploadId = await uploaded(
      readFileSync(path.join(FIXTURES, 'veltrazine-stability.csv')),
      'veltrazine-stability.csv',
      singleStudyId,
    );
    const response = await importWith(uploadId, VELTRAZINE_MAPPING);
    expect(response.status).toBe(201);
    // Recorded with the intake of commit 9b340da (before attributes were read), over the same
    // file and mapping: the series' canonical JSON hashes to exactly this.
    expect(response.body.sha256).toBe('65a471df97806899201b2006f7b28b5a42c86cba4f4b5a0127d373c0e78361fd');
    const series = await storedSeries(response.body.datasetId);
    expect(series.map((entry) => entry.id)).toEqual([
      'VZ-001 @ 25 °C',
      'VZ-002 @ 25 °C',
      'VZ-003 @ 25 °C',
      'VZ-001 @ 40 °C',
      'VZ-001 @ 50 °C',
      'VZ-001 @ 60 °C',
    ]);
    expect(series.every((entry) => entry.attribute === undefined)).toBe(true);
  });

  it('names the one attribute when the mapping does, keeping the ids, and refuses another', async () => {
    const uploadId = await uploaded(Buffer.from(WIDE_CSV), 'one-attribute.csv', singleStudyId);
    const mapping: ColumnMappingInput = {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Assay (%)',
      valueAttribute: 'ASSAY',
      seriesColumn: 'Batch',
    };
    const response = await importWith(uploadId, mapping);
    expect(response.status).toBe(201);
    const series = await storedSeries(response.body.datasetId);
    expect(series.map((entry) => [entry.id, entry.attribute])).toEqual([
      ['OR-2401', 'Assay'],
      ['OR-2402', 'Assay'],
    ]);
    const other = await importWith(uploadId, { ...mapping, valueColumn: 'D', valueAttribute: 'Impurity B' });
    expect(other.status).toBe(400);
    expect(other.body.error.details[0].text).toBe(
      'mapping field valueAttribute: the value column "D" is matched to "Impurity B", which is not an attribute of this study: the study\'s one attribute is Assay',
    );
  });
});
