import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect } from 'vitest';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { createReport } from '../../server/features/reports/reports.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import type { ColumnMappingInput } from '../../shared/intake/column-mapping.ts';
import { csrfFrom, type signIn, type TestWorld } from '../support/test-app.ts';

/**
 * The product's own flow through HTTP, for the record-keeping tests: a study made with the study
 * form, the invented Veltrazine workbook uploaded and imported, an analysis run through the API.
 */
export type Agent = Awaited<ReturnType<typeof signIn>>['agent'];

const FIXTURES = path.resolve(import.meta.dirname, '../fixtures');

export const STUDY_FORM = {
  title: 'Veltrazine long-term (invented)',
  product: 'Veltrazine 10 mg tablets (invented)',
  attribute: 'Assay',
  unit: '% of label claim',
  direction: 'decreasing',
  lowerLimit: '95',
  upperLimit: '105',
  storageTemperatureC: '25',
  storageHumidityPercent: '60',
  batches: 'VZ-001, VZ-002, VZ-003',
  notes: '',
};

export const VELTRAZINE_MAPPING: ColumnMappingInput = {
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay (% label claim)',
  seriesColumn: 'Batch',
  temperatureColumn: 'Temperature (°C)',
};

export async function tokenOf(agent: Agent): Promise<string> {
  return csrfFrom((await agent.get('/')).text);
}

export async function studyThroughForm(agent: Agent, fields: Record<string, string> = {}): Promise<number> {
  const response = await agent
    .post('/studies')
    .type('form')
    .send({ _csrf: await tokenOf(agent), ...STUDY_FORM, ...fields });
  expect(response.status).toBe(303);
  return Number(/\/studies\/(\d+)/.exec(response.headers.location ?? '')?.[1]);
}

export async function editStudy(agent: Agent, studyId: number, fields: Record<string, string>) {
  return agent
    .post(`/studies/${studyId}`)
    .type('form')
    .send({ _csrf: await tokenOf(agent), ...STUDY_FORM, ...fields });
}

export async function uploadVeltrazine(agent: Agent, studyId: number): Promise<number> {
  const response = await agent
    .post(`/api/studies/${studyId}/uploads`)
    .set('x-csrf-token', await tokenOf(agent))
    .attach(
      'file',
      readFileSync(path.join(FIXTURES, 'veltrazine-stability.csv')),
      'veltrazine-stability.csv',
    );
  expect(response.status).toBe(201);
  return response.body.uploadId as number;
}

export async function importUpload(agent: Agent, uploadId: number, extra: Record<string, unknown> = {}) {
  return agent
    .post(`/api/uploads/${uploadId}/import`)
    .set('x-csrf-token', await tokenOf(agent))
    .send({ mapping: VELTRAZINE_MAPPING, ...extra });
}

export async function runThroughApi(agent: Agent, datasetId: number): Promise<number> {
  const response = await agent
    .post(`/api/datasets/${datasetId}/analyses`)
    .set('x-csrf-token', await tokenOf(agent))
    .send({});
  expect(response.status).toBe(201);
  return response.body.runId as number;
}

/** Study, upload, dataset and one run, all through HTTP. */
export async function studyWithRun(agent: Agent, fields: Record<string, string> = {}) {
  const studyId = await studyThroughForm(agent, fields);
  const uploadId = await uploadVeltrazine(agent, studyId);
  const imported = await importUpload(agent, uploadId);
  expect(imported.status).toBe(201);
  const datasetId = imported.body.datasetId as number;
  const runId = await runThroughApi(agent, datasetId);
  return { studyId, uploadId, datasetId, runId };
}

/**
 * A report of the run, made by the report service with a queue that sends nothing: these tests
 * need its records, not a render, and a job left in the shared pg-boss queue would be rendered by
 * the worker of a later test file into that file's report folder.
 */
export async function reportWithoutRender(
  world: TestWorld,
  userName: string,
  runId: number,
): Promise<number> {
  const user = world.users[userName]!;
  const sender = openRenderQueue({
    config: parseRenderConfig(),
    pool: world.database.pool,
    supervise: false,
  });
  const queue: RenderQueue = { ...sender, enqueue: async () => 'not-sent' };
  const actor: SessionUser = {
    id: user.id,
    email: user.email,
    fullName: `Test ${userName}`,
    organisationId: world.organisationId,
    organisationName: 'test',
    roles: user.roles,
  };
  const created = await createReport(world.database.db, queue, actor, runId, {}, {});
  return created.reportId;
}
