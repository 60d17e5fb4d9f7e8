// The temperature-log screen end to end through the app: upload form (multipart, CSRF in the
// body), the stored write-once assessment, its audit event, the page, the downloads, refusals
// that name the cell and store nothing, and organisation and role boundaries.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, temperatureLogAssessments } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { studyThroughForm, studyWithRun } from './study-flow-fixture.ts';

const STORE_ROOM = readFileSync(
  path.resolve(import.meta.dirname, '..', 'fixtures', 'temperature-log-store-room.csv'),
);

let world: TestWorld;
let other: TestWorld;
beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst'] });
});
afterAll(async () => {
  await world.close();
  await other.close();
});

const signInAs = (w: TestWorld, who: string) => signIn(w.app, w.users[who]!.email, w.users[who]!.password);
type Agent = Awaited<ReturnType<typeof signInAs>>['agent'];

/** Every field of the form, as a browser sends it (blank fields included). */
const FIELDS = {
  title: 'Store room B, July 2026 (invented)',
  timeColumn: 'Recorded at',
  temperatureColumn: 'Temperature',
  sheet: '',
  headerRow: '1',
  timeUnit: '',
  temperatureUnit: '',
  rangeMinC: '15',
  rangeMaxC: '25',
  activationEnergyKJPerMol: '83,144',
  window: '24 h',
  windowStep: '',
  maxInterval: '',
};

async function postLog(
  agent: Agent,
  fields: Record<string, string>,
  file: Buffer | null,
  name = 'store-room.csv',
) {
  const form = await agent.get('/temperature-logs/new');
  expect(form.status).toBe(200);
  let request = agent.post('/temperature-logs').field('_csrf', csrfFrom(form.text));
  for (const [key, value] of Object.entries(fields)) request = request.field(key, value);
  if (file) request = request.attach('file', file, name);
  return request;
}

async function countAssessments(w: TestWorld): Promise<number> {
  const rows = await w.database.db
    .select({ n: sql<number>`count(*)::int` })
    .from(temperatureLogAssessments)
    .where(eq(temperatureLogAssessments.organisationId, w.organisationId));
  return rows[0]!.n;
}

describe('temperature-log assessments', () => {
  let id = 0;

  it('an analyst uploads a logger file; the assessment is stored with its file, audited and shown', async () => {
    const { agent } = await signInAs(world, 'analyst');
    const created = await postLog(agent, FIELDS, STORE_ROOM);
    expect(created.status).toBe(303);
    id = Number(/\/temperature-logs\/(\d+)\?saved=1$/.exec(created.headers.location ?? '')?.[1]);
    expect(id).toBeGreaterThan(0);

    const [row] = await world.database.db
      .select()
      .from(temperatureLogAssessments)
      .where(eq(temperatureLogAssessments.id, id));
    expect(Buffer.compare(row!.content, STORE_ROOM)).toBe(0);
    expect(row!.excursionCount).toBe(1);
    expect(row!.maxC).toBe(31.5);
    expect(row!.figureSvg.startsWith('<svg')).toBe(true);
    // The same document the mkt command prints (server/cli/mkt.test.ts checks those values).
    const result = row!.result as { excursions: { startAt: string; duration: number }[]; gaps: unknown[] };
    expect(result.excursions).toEqual([
      expect.objectContaining({ startAt: '2026-07-15T13:45:00.000Z', duration: 3 }),
    ]);
    expect(result.gaps).toHaveLength(1);

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.recordType, 'temperature_log_assessment'), eq(auditEvents.recordId, String(id))),
      );
    expect(event).toMatchObject({ action: 'temperature-log.assessed', recordId: String(id) });
    expect(event!.afterValue).toMatchObject({ sha256: row!.sha256, excursions: 1, gaps: 1 });

    const page = await agent.get(`/temperature-logs/${id}?saved=1`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('Store room B, July 2026 (invented)');
    expect(page.text).toMatch(/Mean kinetic temperature, whole log<\/th><td[^>]*>21\.71 °C/);
    expect(page.text).toContain('2026-07-15 13:45 UTC');
    expect(page.text).toContain('do not replace, qualified judgement');
    expect(page.text).toContain(row!.sha256);
    expect(page.text).toContain('<svg');
  });

  it('a reviewer reads the list, the page and both downloads; the file comes back byte for byte', async () => {
    const { agent } = await signInAs(world, 'reviewer');
    const list = await agent.get('/temperature-logs');
    expect(list.status).toBe(200);
    expect(list.text).toContain(`href="/temperature-logs/${id}"`);
    expect(list.text).not.toContain('href="/temperature-logs/new"');
    const original = await agent.get(`/temperature-logs/${id}/original`);
    expect(original.status).toBe(200);
    expect(original.headers['content-type']).toMatch(/^text\/csv/);
    expect(original.headers['content-disposition']).toContain('store-room.csv');
    expect(original.text).toBe(STORE_ROOM.toString('utf8'));
    const json = await agent.get(`/temperature-logs/${id}/assessment.json`);
    expect(json.status).toBe(200);
    expect(json.body.result.windows.length).toBeGreaterThan(10);
    expect(json.body.settings.window).toEqual({ value: 24, unit: 'h' });
    expect(json.body.settings.activationEnergyKJPerMol).toBe(83.144);
    // Reviewers read; only analysts assess.
    expect((await agent.get('/temperature-logs/new')).status).toBe(403);
  });

  it('the stored assessment is write-once: the database refuses UPDATE and DELETE', async () => {
    const refusal = (query: Promise<unknown>) =>
      query.then(
        () => 'accepted',
        (error: Error & { cause?: Error }) => error.cause?.message ?? error.message,
      );
    const { db } = world.database;
    expect(
      await refusal(db.execute(sql`update temperature_log_assessments set title = 'x' where id = ${id}`)),
    ).toMatch(/write-once/);
    expect(await refusal(db.execute(sql`delete from temperature_log_assessments where id = ${id}`))).toMatch(
      /write-once/,
    );
  });

  it('another organisation sees neither the assessment nor its file', async () => {
    const { agent } = await signInAs(other, 'outsider');
    expect((await agent.get(`/temperature-logs/${id}`)).status).toBe(404);
    expect((await agent.get(`/temperature-logs/${id}/original`)).status).toBe(404);
    expect((await agent.get('/temperature-logs')).text).not.toContain(`/temperature-logs/${id}"`);
  });

  it('a bad cell is refused with its cell named, the values kept, and nothing stored', async () => {
    const { agent } = await signInAs(world, 'analyst');
    const before = await countAssessments(world);
    const broken = Buffer.from(
      'Recorded at,Temperature (°C)\n2026-07-14 00:00,21.0\n2026-07-14 00:30,n/a\n2026-07-14 00:15,21.2\n',
    );
    const refused = await postLog(agent, FIELDS, broken, 'broken_log.csv');
    expect(refused.status).toBe(422);
    expect(refused.text).toContain('broken_log!B3: temperature &quot;n/a&quot; is not a number');
    expect(refused.text).toContain('broken_log!A4: this time is not after the one in row 3');
    expect(refused.text).toContain('value="Store room B, July 2026 (invented)"');
    expect(await countAssessments(world)).toBe(before);
  });

  it('form errors sit beside their fields (aria-invalid, aria-describedby), and nothing is stored', async () => {
    const { agent } = await signInAs(world, 'analyst');
    const before = await countAssessments(world);
    const refused = await postLog(
      agent,
      { ...FIELDS, title: '', rangeMinC: '30', rangeMaxC: '20', window: 'a month' },
      STORE_ROOM,
    );
    expect(refused.status).toBe(400);
    expect(refused.text).toMatch(/id="log-title"[^>]*aria-describedby="title-error"[^>]*aria-invalid="true"/);
    expect(refused.text).toMatch(
      /id="rangeMaxC-error"[^>]*>The lowest labelled temperature must be below the highest\./,
    );
    expect(refused.text).toMatch(
      /id="window-error"[^>]*>Write the window as a positive number and a time unit/,
    );
    expect(await countAssessments(world)).toBe(before);
  });

  it('a missing file, an unknown column and a form without its CSRF token are refused clearly', async () => {
    const { agent } = await signInAs(world, 'analyst');
    const before = await countAssessments(world);
    const noFile = await postLog(agent, FIELDS, null);
    expect(noFile.status).toBe(400);
    expect(noFile.text).toContain('Choose the logger file (CSV or XLSX) to assess.');
    const noColumn = await postLog(agent, { ...FIELDS, temperatureColumn: 'Humidity' }, STORE_ROOM);
    expect(noColumn.status).toBe(422);
    expect(noColumn.text).toMatch(/temperature column: /);
    const forged = await agent
      .post('/temperature-logs')
      .field('title', 'x')
      .attach('file', STORE_ROOM, 'log.csv');
    expect(forged.status).toBe(403);
    expect(await countAssessments(world)).toBe(before);
  });

  it('with a study, the log is priced in the study’s own Arrhenius fit and the analysis is named', async () => {
    const { agent } = await signInAs(world, 'analyst');
    // The invented Veltrazine study: 25 °C long-term and 40, 50, 60 °C batches (an Arrhenius fit).
    const { studyId, runId } = await studyWithRun(agent);
    const created = await postLog(
      agent,
      { ...FIELDS, studyId: String(studyId), latestValue: '99,2' },
      STORE_ROOM,
    );
    expect(created.status).toBe(303);
    const logId = Number(/\/temperature-logs\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
    const [row] = await world.database.db
      .select()
      .from(temperatureLogAssessments)
      .where(eq(temperatureLogAssessments.id, logId));
    // biome-ignore lint/suspicious/noExplicitAny: the stored JSON is checked field by field.
    const impact = (row!.result as any).impact;
    expect(impact.source).toMatchObject({ studyId, analysisRunId: runId, unit: '% of label claim' });
    expect(impact.storageTemperatureC).toBe(25);
    expect(impact.latestValue).toBe(99.2);
    expect(impact.limit).toBe(95);
    // The store room's MKT (21.7 °C) is below the 25 °C storage temperature, so the log cost less
    // than its own duration at 25 °C, inside an interval around it.
    expect(impact.equivalentDuration.estimate).toBeLessThan(impact.loggedDuration);
    expect(impact.equivalentDuration.interval[0]).toBeLessThan(impact.equivalentDuration.estimate);
    expect(impact.margin.before).toBeCloseTo(4.2, 10);
    expect(impact.margin.after.estimate).toBeLessThan(4.2);
    const page = await agent.get(`/temperature-logs/${logId}`);
    expect(page.text).toContain('What the log cost Veltrazine 10 mg tablets (invented)');
    expect(page.text).toContain(`Arrhenius fit of analysis ${runId}`);
    expect(page.text).toContain('Margin left after the log');
  });

  it('a study without an analysis, or a latest result without a study, is refused beside its field', async () => {
    const { agent } = await signInAs(world, 'analyst');
    const before = await countAssessments(world);
    const bare = await studyThroughForm(agent, { title: 'No analysis yet (invented)' });
    const refused = await postLog(agent, { ...FIELDS, studyId: String(bare) }, STORE_ROOM);
    expect(refused.status).toBe(422);
    expect(refused.text).toMatch(/id="studyId-error"[^>]*>This study has no analysis yet/);
    const orphan = await postLog(agent, { ...FIELDS, latestValue: '98' }, STORE_ROOM);
    expect(orphan.status).toBe(400);
    expect(orphan.text).toMatch(/id="latestValue-error"[^>]*>A latest result needs the study/);
    // Another organisation's study is not found, as if it did not exist.
    const { agent: outsider } = await signInAs(other, 'outsider');
    const foreign = await postLog(outsider, { ...FIELDS, studyId: String(bare) }, STORE_ROOM);
    expect(foreign.status).toBe(422);
    expect(await countAssessments(world)).toBe(before);
  });
});
