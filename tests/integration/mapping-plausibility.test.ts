// Issue 12 §6 at the mapping step: a time column that reads cleanly but is not the time of each
// pull is flagged in the preview's check and in the import's answer (warnings: the analyst may
// still import), and refused when every series would sit at one time; a negative amount gets a
// warning on its cell. The sample workbook is invented (docs/sample-workbook/README.md); the
// expectations are its own cells.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { datasets, studies } from '../../server/platform/db/schema/index.ts';
import { mappingCheckSchema } from '../../shared/api/uploads.ts';
import type { ColumnMappingInput } from '../../shared/intake/column-mapping.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

const SAMPLE = path.resolve(import.meta.dirname, '../../docs/sample-workbook/orvellin-stability.xlsx');

let world: TestWorld;
let studyId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;
let sampleUpload: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  const [study] = await world.database.db
    .insert(studies)
    .values({
      organisationId: world.organisationId,
      title: 'Mapping plausibility',
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
  sampleUpload = await uploaded(readFileSync(SAMPLE), 'orvellin-stability.xlsx');
});
afterAll(() => world.close());

async function uploaded(bytes: Buffer, name: string): Promise<number> {
  const response = await analyst
    .post(`/api/studies/${studyId}/uploads`)
    .set('x-csrf-token', token)
    .attach('file', bytes, name);
  expect(response.status).toBe(201);
  return response.body.uploadId as number;
}

async function check(uploadId: number, mapping: ColumnMappingInput) {
  const response = await analyst
    .get(`/api/uploads/${uploadId}/preview`)
    .query({ mapping: JSON.stringify(mapping) });
  expect(response.status).toBe(200);
  return mappingCheckSchema.parse(response.body.check);
}

const importWith = (uploadId: number, mapping: ColumnMappingInput) =>
  analyst.post(`/api/uploads/${uploadId}/import`).set('x-csrf-token', token).send({ mapping });

const datasetCount = () =>
  world.database.db.$count(datasets, eq(datasets.organisationId, world.organisationId));

const TEMPERATURE_AS_TIME: ColumnMappingInput = {
  timeColumn: 'Temperature',
  timeUnit: 'month',
  valueColumn: 'Assay',
  valueUnit: '% label claim',
  seriesColumn: 'Batch',
};

describe('the mapping check of the time column', () => {
  it('the sample workbook mapped as its README says reads with no warning', async () => {
    const result = await check(sampleUpload, {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Assay',
      valueUnit: '% label claim',
      seriesColumn: 'Batch',
      temperatureColumn: 'Temperature',
    });
    expect(result).toMatchObject({ ok: true, problems: [], warnings: [], seriesCount: 9, pointCount: 56 });
  });

  it('time = Temperature no longer "reads cleanly": warnings name sheet, column and rows, and the import still proceeds', async () => {
    const result = await check(sampleUpload, TEMPERATURE_AS_TIME);
    expect(result.ok).toBe(true);
    expect(result.warnings.map((warning) => warning.where)).toEqual([
      "'Stability data'!C2:C57",
      "'Stability data'!C2:C57",
    ]);
    expect(result.warnings[0]!.message).toMatch(
      /^the time column C \("Temperature \(°C\)"\) is headed like a temperature, not a time: .*map it as the temperature column and choose the column that holds the time of each pull \(perhaps D \("Month"\)\)$/,
    );
    expect(result.warnings[1]!.message).toMatch(/has only 5 different values \(25, 40, 50, 60, 70\)/);

    const before = await datasetCount();
    const response = await importWith(sampleUpload, TEMPERATURE_AS_TIME);
    expect(response.status).toBe(201);
    expect(response.body.warnings[0]).toMatch(
      /^'Stability data'!C2:C57: the time column C .* headed like a temperature/,
    );
    expect(await datasetCount()).toBe(before + 1);
  });

  it('time and temperature from one column (by name or by letter): 422 naming the column, nothing stored', async () => {
    const before = await datasetCount();
    for (const timeColumn of ['Temperature', 'C']) {
      const mapping = { ...TEMPERATURE_AS_TIME, timeColumn, temperatureColumn: 'Temperature' };
      expect((await check(sampleUpload, mapping)).ok).toBe(false);
      const response = await importWith(sampleUpload, mapping);
      expect(response.status).toBe(422);
      expect(response.body.error.message).toMatch(/nothing was stored/);
      expect(response.body.error.details.map((problem: { text: string }) => problem.text)).toEqual([
        `'Stability data': column C ("Temperature (°C)") is mapped as both the time and the temperature, so each series would have a single time: choose the column that holds the time of each pull`,
      ]);
    }
    expect(await datasetCount()).toBe(before);
  });

  it('time and value swapped: a warning that the time falls down the rows', async () => {
    const result = await check(sampleUpload, {
      ...TEMPERATURE_AS_TIME,
      timeColumn: 'Assay',
      valueColumn: 'Month',
      temperatureColumn: 'Temperature',
    });
    expect(result.ok).toBe(true);
    expect(result.warnings.map((warning) => warning.text)).toEqual([
      expect.stringMatching(
        /^'Stability data'!E2:E57: in every series the time in E \("Assay \(% label claim\)"\) falls down the rows \(OR-2401 @ 25 °C: 100\.5 in row 2 to .* check that the time and value columns are not swapped/,
      ),
    ]);
  });
});

describe('a negative value of an amount', () => {
  it('gets a warning with its cell reference in the check and in the import; the value is kept', async () => {
    const uploadId = await uploaded(
      Buffer.from('Month,Impurity B (%)\n0,0.02\n3,-0.01\n6,0.05\n9,0.07\n'),
      'impurity.csv',
    );
    const mapping: ColumnMappingInput = {
      timeColumn: 'Month',
      timeUnit: 'month',
      valueColumn: 'Impurity B',
      valueUnit: '%',
    };
    const result = await check(uploadId, mapping);
    expect(result.ok).toBe(true);
    expect(result.warnings).toEqual([
      {
        where: 'impurity!B3',
        message:
          'value -0.01 is negative, but an amount in "%" cannot be: check the cell (a typing error, or a result below the quantitation limit written as a number); it is imported as written',
        text: 'impurity!B3: value -0.01 is negative, but an amount in "%" cannot be: check the cell (a typing error, or a result below the quantitation limit written as a number); it is imported as written',
      },
    ]);
    const response = await importWith(uploadId, mapping);
    expect(response.status).toBe(201);
    expect(response.body.warnings).toEqual([result.warnings[0]!.text]);
  });
});
