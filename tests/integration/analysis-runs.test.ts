import { createHash } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDemoDataset } from '../../server/demo/demo-study.ts';
import { canonicalJson } from '../../server/platform/audit/canonical-json.ts';
import { analysisRuns, auditEvents, datasets } from '../../server/platform/db/schema/index.ts';
import type { StoredAnalysisResult } from '../../shared/figures/stored-result.ts';
import { ENGINE_VERSION } from '../../shared/kinetics/version.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
let other: TestWorld;
let datasetId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let analystToken: string;

async function tokenOf(agent: typeof analyst): Promise<string> {
  const page = await agent.get('/');
  return csrfFrom(page.text);
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'], admin: ['admin'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer'] });
  const created = await createDemoDataset(world.database.db, {
    organisationId: world.organisationId,
    analystUserId: world.users.analyst!.id,
    analystName: 'Test analyst',
  });
  datasetId = created.datasetId;
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  analystToken = await tokenOf(analyst);
});
afterAll(async () => {
  await world?.close();
  await other?.close();
});

async function runCount(): Promise<number> {
  const [row] = await world.database.db
    .select({ count: sql<number>`count(*)::int` })
    .from(analysisRuns)
    .where(eq(analysisRuns.organisationId, world.organisationId));
  return row!.count;
}

describe('running an analysis', () => {
  it('stores dataset hash, engine version, options, full result and method statement, and audits the run', async () => {
    const response = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({});
    expect(response.status).toBe(201);
    const runId = response.body.runId as number;
    expect(response.headers.location).toBe(`/analyses/${runId}`);

    const [run] = await world.database.db.select().from(analysisRuns).where(eq(analysisRuns.id, runId));
    const [dataset] = await world.database.db.select().from(datasets).where(eq(datasets.id, datasetId));
    // The recorded hash is the dataset's, and it is SHA-256 (FIPS 180-4, via node:crypto) of the
    // canonical JSON of the series actually stored.
    expect(run!.datasetSha256).toBe(dataset!.sha256);
    expect(createHash('sha256').update(canonicalJson(dataset!.series)).digest('hex')).toBe(
      run!.datasetSha256,
    );
    expect(run!.engineVersion).toBe(ENGINE_VERSION);
    expect(run!.options).toMatchObject({
      analyst: { confidenceLevel: 0.95, errorModel: 'auto' },
      engine: { lowerLimit: 95, upperLimit: 105, storageTemperatureC: 25, direction: 'decreasing' },
    });
    const result = run!.result as StoredAnalysisResult;
    expect(result.analysis.series).toHaveLength(dataset!.series.length);
    expect(result.analysis.engineVersion).toBe(ENGINE_VERSION);
    expect(result.analysis.arrhenius?.rateConstants).toHaveLength(4);
    expect(result.confidenceBands.length).toBeGreaterThan(0);
    expect(run!.methodStatement).toBe(result.analysis.methodStatement.text);
    expect(run!.methodStatement).toContain(`Rateledger kinetics engine ${ENGINE_VERSION}`);
    expect(run!.supersedesRunId).toBeNull();
    expect(run!.runBy).toBe(world.users.analyst!.id);

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.action, 'analysis.run'),
          eq(auditEvents.recordId, String(runId)),
        ),
      );
    expect(event?.actorUserId).toBe(world.users.analyst!.id);
    expect(event?.afterValue).toMatchObject({
      datasetId,
      datasetSha256: dataset!.sha256,
      engineVersion: ENGINE_VERSION,
    });
  });

  it('the stored run cannot be changed or deleted (write-once trigger)', async () => {
    const [run] = await world.database.db.select({ id: analysisRuns.id }).from(analysisRuns).limit(1);
    await expect(
      world.database.db
        .update(analysisRuns)
        .set({ methodStatement: 'edited' })
        .where(eq(analysisRuns.id, run!.id)),
    ).rejects.toThrow();
    await expect(
      world.database.db.delete(analysisRuns).where(eq(analysisRuns.id, run!.id)),
    ).rejects.toThrow();
  });

  it('refuses an exclusion without a reason, naming the field, and stores nothing', async () => {
    const before = await runCount();
    const seriesId = 'QT-2401 @ 40 °C';
    const response = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({ exclusions: [{ seriesId, observationIndex: 1 }] });
    expect(response.status).toBe(400);
    expect(response.body.error.details).toEqual(
      expect.arrayContaining([expect.objectContaining({ field: 'exclusions.0.reason' })]),
    );
    const short = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({ exclusions: [{ seriesId, observationIndex: 1, reason: 'bad' }] });
    expect(short.status).toBe(400);
    expect(short.body.error.details[0]).toMatchObject({ field: 'exclusions.0.reason' });
    const nowhere = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({ exclusions: [{ seriesId, observationIndex: 99, reason: 'a reason that is long enough' }] });
    expect(nowhere.status).toBe(400);
    expect(nowhere.body.error.details[0]).toMatchObject({ field: 'exclusions.0.observationIndex' });
    expect(await runCount()).toBe(before);
  });

  it('an exclusion creates a new run that supersedes the earlier one, which stays readable and unchanged', async () => {
    const first = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({ options: { order: 1 } });
    const earlierId = first.body.runId as number;
    const [earlierBefore] = await world.database.db
      .select()
      .from(analysisRuns)
      .where(eq(analysisRuns.id, earlierId));

    const missingReason = await analyst
      .post(`/api/analyses/${earlierId}/exclusions`)
      .set('x-csrf-token', analystToken)
      .send({ seriesId: 'QT-2402 @ 40 °C', observationIndex: 2 });
    expect(missingReason.status).toBe(400);
    expect(missingReason.body.error.details).toEqual([expect.objectContaining({ field: 'reason' })]);

    const reason = 'Vial cracked at the 2-month pull (deviation DV-TEST-1).';
    const excluded = await analyst
      .post(`/api/analyses/${earlierId}/exclusions`)
      .set('x-csrf-token', analystToken)
      .send({ seriesId: 'QT-2402 @ 40 °C', observationIndex: 2, reason });
    expect(excluded.status).toBe(201);
    expect(excluded.body.supersedesRunId).toBe(earlierId);
    const newerId = excluded.body.runId as number;

    const [earlierAfter] = await world.database.db
      .select()
      .from(analysisRuns)
      .where(eq(analysisRuns.id, earlierId));
    expect(earlierAfter).toEqual(earlierBefore);
    const [newer] = await world.database.db.select().from(analysisRuns).where(eq(analysisRuns.id, newerId));
    expect(newer!.supersedesRunId).toBe(earlierId);
    expect(newer!.options).toEqual(earlierBefore!.options);
    expect(newer!.exclusions).toEqual([
      expect.objectContaining({ seriesId: 'QT-2402 @ 40 °C', observationIndex: 2, reason }),
    ]);
    const statement = (newer!.result as StoredAnalysisResult).analysis.methodStatement;
    expect(statement.data.excludedPoints).toEqual([
      expect.objectContaining({ seriesId: 'QT-2402 @ 40 °C', reason }),
    ]);
    expect(newer!.methodStatement).toContain(reason);
    const series = (newer!.result as StoredAnalysisResult).analysis.series.find(
      (entry) => entry.id === 'QT-2402 @ 40 °C',
    );
    expect(series?.analysis?.n).toBe(4);

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.action, 'analysis.point-excluded'),
          eq(auditEvents.recordId, String(newerId)),
        ),
      );
    expect(event?.context).toMatchObject({
      supersedesRunId: earlierId,
      point: { seriesId: 'QT-2402 @ 40 °C', observationIndex: 2 },
      reason,
    });

    const earlierJson = await analyst.get(`/api/analyses/${earlierId}`);
    expect(earlierJson.status).toBe(200);
    expect(earlierJson.body.supersededByRunId).toBe(newerId);
    expect(earlierJson.body.exclusions).toEqual([]);
    const earlierPage = await analyst.get(`/analyses/${earlierId}`);
    expect(earlierPage.status).toBe(200);
    expect(earlierPage.text).toContain('Superseded');
    expect(earlierPage.text).toContain(`href="/analyses/${newerId}"`);
    expect(earlierPage.text).not.toContain('Exclude the point and re-run');
    const newerPage = await analyst.get(`/analyses/${newerId}`);
    expect(newerPage.text).toContain(reason);
    expect(newerPage.text).toContain(`href="/analyses/${earlierId}"`);

    const again = await analyst
      .post(`/api/analyses/${earlierId}/exclusions`)
      .set('x-csrf-token', analystToken)
      .send({ seriesId: 'QT-2401 @ 40 °C', observationIndex: 1, reason });
    expect(again.status).toBe(409);
  });

  it('the form on the analysis page shows problems beside the fields, and redirects to the new run', async () => {
    const first = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({});
    const runId = first.body.runId as number;
    const page = await analyst.get(`/analyses/${runId}`);
    const token = csrfFrom(page.text);
    const before = await runCount();
    const refused = await analyst
      .post(`/analyses/${runId}/exclusions`)
      .type('form')
      .send({ _csrf: token, point: '0:1', reason: '' });
    expect(refused.status).toBe(400);
    expect(refused.text).toContain('id="exclude-reason-problem"');
    expect(refused.text).toContain('selected');
    expect(await runCount()).toBe(before);
    const accepted = await analyst
      .post(`/analyses/${runId}/exclusions`)
      .type('form')
      .send({ _csrf: token, point: '0:1', reason: 'Sample mislabelled at the 3-month pull (test).' });
    expect(accepted.status).toBe(303);
    expect(accepted.headers.location).toMatch(/^\/analyses\/\d+#exclusions$/);
  });
});

describe('the proposed shelf life (ICH Q1E)', () => {
  it('uses the study declaration, records it with the run, and never proposes above the estimate or the limit', async () => {
    const response = await analyst
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', analystToken)
      .send({ options: { order: 1 } });
    const runId = response.body.runId as number;
    const [run] = await world.database.db.select().from(analysisRuns).where(eq(analysisRuns.id, runId));
    // The demo study declares room temperature, accelerated 40 °C with significant change, no intermediate.
    expect(run!.options).toMatchObject({
      engine: {
        q1e: {
          storage: 'room-temperature',
          longTermTemperatureC: 25,
          acceleratedTemperatureC: 40,
          acceleratedChange: 'significant',
          intermediateChange: 'unknown',
        },
      },
    });
    const conditions = (run!.result as StoredAnalysisResult).analysis.shelfLife!;
    expect(conditions.map((condition) => [condition.temperatureC, condition.role])).toEqual([
      [25, 'long-term'],
      [40, 'accelerated'],
      [50, 'not-declared'],
      [60, 'not-declared'],
    ]);
    const [longTerm] = conditions;
    const limit = longTerm!.proposal.extrapolationLimit;
    // Significant change at accelerated; intermediate not stated → taken as significant → ICH Q1E §2.4.2.2.
    expect(limit.branch).toBe('room-temperature.accelerated-and-intermediate-change');
    expect(limit.section).toBe('ICH Q1E §2.4.2.2');
    expect(limit.assumptions).toEqual([
      expect.stringMatching(/^Significant change at the intermediate condition not stated/),
    ]);
    expect(limit.valueMonths).toBe(36); // X = 36 months of long-term data, no extrapolation
    const proposed = longTerm!.proposal.proposedShelfLife!;
    expect(Number.isInteger(proposed)).toBe(true);
    expect(proposed).toBeLessThanOrEqual(longTerm!.result!.shelfLife!);
    expect(proposed).toBeLessThanOrEqual(36);
    expect(conditions.slice(1).every((condition) => condition.proposal.proposedShelfLife === null)).toBe(
      true,
    );

    const page = await analyst.get(`/analyses/${runId}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain(`Proposed shelf life at 25 °C: ${proposed} months.`);
    expect(page.text).toMatch(
      /id="q1e-assumptions"[^>]*><li>Significant change at the intermediate condition not stated/,
    );
    expect(page.text).toContain('room-temperature storage; significant change at the accelerated condition');
    expect(page.text).toContain('These statistical estimates support, but do not replace');
    expect(run!.methodStatement).toContain(
      'Shelf-life proposal. Declared by the study: storage room temperature',
    );
  });

  it('a run recorded before proposals existed still shows, and says how to get one', async () => {
    const [latest] = await world.database.db
      .select()
      .from(analysisRuns)
      .where(eq(analysisRuns.organisationId, world.organisationId))
      .limit(1);
    const stored = structuredClone(latest!.result) as StoredAnalysisResult;
    for (const condition of stored.analysis.shelfLife ?? []) {
      delete (condition as Partial<typeof condition>).proposal;
      delete (condition as Partial<typeof condition>).role;
    }
    const [old] = await world.database.db
      .insert(analysisRuns)
      .values({ ...latest!, id: undefined, result: stored, supersedesRunId: null, runAt: undefined })
      .returning({ id: analysisRuns.id });
    const page = await analyst.get(`/analyses/${old!.id}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('recorded before shelf-life proposals');
    expect(page.text).toContain('no extrapolation limit was applied in this run');
  });
});

describe('who may do what', () => {
  it('reviewers and admins read; only analysts run and exclude; other organisations see nothing', async () => {
    const [run] = await world.database.db
      .select({ id: analysisRuns.id })
      .from(analysisRuns)
      .where(eq(analysisRuns.organisationId, world.organisationId))
      .limit(1);
    const reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
      .agent;
    const reviewerToken = await tokenOf(reviewer);
    const refused = await reviewer
      .post(`/api/datasets/${datasetId}/analyses`)
      .set('x-csrf-token', reviewerToken)
      .send({});
    expect(refused.status).toBe(403);
    const refusedExclusion = await reviewer
      .post(`/api/analyses/${run!.id}/exclusions`)
      .set('x-csrf-token', reviewerToken)
      .send({ seriesId: 'QT-2401 @ 40 °C', observationIndex: 1, reason: 'a reviewer should not do this' });
    expect(refusedExclusion.status).toBe(403);
    expect((await reviewer.get(`/analyses/${run!.id}`)).status).toBe(200);
    expect((await reviewer.get(`/analyses/${run!.id}`)).text).not.toContain('Exclude the point and re-run');
    expect((await reviewer.get(`/api/analyses/${run!.id}/figures`)).status).toBe(200);

    const admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
    expect((await admin.get(`/api/analyses/${run!.id}`)).status).toBe(200);
    expect((await admin.get(`/api/analyses/${run!.id}/export.csv`)).status).toBe(200);

    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    expect((await outsider.get(`/api/analyses/${run!.id}`)).status).toBe(404);
    const outsiderToken = await tokenOf(outsider);
    expect(
      (await outsider.post(`/api/datasets/${datasetId}/analyses`).set('x-csrf-token', outsiderToken).send({}))
        .status,
    ).toBe(404);

    const anonymous = await (await import('supertest')).default(world.app).get(`/api/analyses/${run!.id}`);
    expect(anonymous.status).toBe(401);
  });
});
