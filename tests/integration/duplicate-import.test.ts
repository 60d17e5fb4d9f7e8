import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, datasets } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import {
  type Agent,
  importUpload,
  studyThroughForm,
  tokenOf,
  uploadVeltrazine,
  VELTRAZINE_MAPPING,
} from './study-flow-fixture.ts';

/**
 * §2 of issue 13: the same upload imported again with the same mapping is refused (409, naming
 * the dataset that exists) unless the analyst gives a reason, which the audit trail keeps.
 */

let world: TestWorld;
let other: TestWorld;
let analyst: Agent;
let studyId: number;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst'] });
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  studyId = await studyThroughForm(analyst);
});
afterAll(async () => {
  await world?.close();
  await other?.close();
});

const datasetsOf = (uploadId: number) => world.database.db.$count(datasets, eq(datasets.uploadId, uploadId));

describe('importing the same upload with the same mapping again', () => {
  it('is refused with 409 naming the existing dataset, and stores nothing', async () => {
    const uploadId = await uploadVeltrazine(analyst, studyId);
    const first = await importUpload(analyst, uploadId);
    expect(first.status).toBe(201);
    const again = await importUpload(analyst, uploadId);
    expect(again.status).toBe(409);
    expect(again.body.error.message).toContain(
      `already imported with this mapping as dataset #${first.body.datasetId}`,
    );
    expect(again.body.error.message).toContain('give a reason to import it again');
    expect(again.body.error.details).toEqual({ existingDatasetId: first.body.datasetId });
    expect(await datasetsOf(uploadId)).toBe(1);
    // The same mapping written in another key order is still the same mapping.
    const reordered = Object.fromEntries(Object.entries(VELTRAZINE_MAPPING).reverse());
    const shuffled = await analyst
      .post(`/api/uploads/${uploadId}/import`)
      .set('x-csrf-token', await tokenOf(analyst))
      .send({ mapping: reordered });
    expect(shuffled.status).toBe(409);
  });

  it('goes ahead with a reason, kept in the audit event beside the dataset it repeats', async () => {
    const uploadId = await uploadVeltrazine(analyst, studyId);
    const first = await importUpload(analyst, uploadId);
    const blank = await importUpload(analyst, uploadId, { duplicateReason: '   ' });
    expect(blank.status).toBe(400);
    expect(await datasetsOf(uploadId)).toBe(1);
    const again = await importUpload(analyst, uploadId, {
      duplicateReason: 'Second copy for the method-transfer exercise (invented).',
    });
    expect(again.status).toBe(201);
    expect(again.body.datasetId).not.toBe(first.body.datasetId);
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.action, 'dataset.imported'),
          eq(auditEvents.recordId, String(again.body.datasetId)),
        ),
      );
    expect(event!.afterValue).toMatchObject({
      duplicateOf: first.body.datasetId,
      duplicateReason: 'Second copy for the method-transfer exercise (invented).',
    });
  });

  it('another mapping of the same upload is not a repeat', async () => {
    const uploadId = await uploadVeltrazine(analyst, studyId);
    expect((await importUpload(analyst, uploadId)).status).toBe(201);
    const otherMapping = await analyst
      .post(`/api/uploads/${uploadId}/import`)
      .set('x-csrf-token', await tokenOf(analyst))
      .send({ mapping: { ...VELTRAZINE_MAPPING, timeUnit: 'week' } });
    expect(otherMapping.status).toBe(201);
  });

  it('two imports sent at once store one dataset; the other is refused', async () => {
    const uploadId = await uploadVeltrazine(analyst, studyId);
    const answers = await Promise.all([importUpload(analyst, uploadId), importUpload(analyst, uploadId)]);
    expect(answers.map((answer) => answer.status).sort()).toEqual([201, 409]);
    expect(await datasetsOf(uploadId)).toBe(1);
  });

  it('a reviewer may not import, and another organisation cannot reach the upload', async () => {
    const uploadId = await uploadVeltrazine(analyst, studyId);
    const reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
      .agent;
    expect((await importUpload(reviewer, uploadId, { duplicateReason: 'not mine' })).status).toBe(403);
    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    expect((await importUpload(outsider, uploadId, { duplicateReason: 'not mine' })).status).toBe(404);
    expect(await datasetsOf(uploadId)).toBe(0);
  });
});
