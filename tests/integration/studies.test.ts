import { and, asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, studies } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'], admin: ['admin'] });
});
afterAll(() => world.close());

const signInAs = (who: string) => signIn(world.app, world.users[who]!.email, world.users[who]!.password);

const VALID = {
  title: 'Long-term and accelerated, 2025 campaign',
  product: 'Orvellin 250 mg film-coated tablets (invented)',
  attribute: 'Assay',
  unit: '% of label claim',
  direction: 'decreasing',
  lowerLimit: '95,0',
  upperLimit: '105',
  storageTemperatureC: '25',
  storageHumidityPercent: '60',
  batches: 'OR-2401, OR-2402\nOR-2403\nOR-2401',
  notes: 'Invented study for tests.',
};

async function postStudy(
  agent: Awaited<ReturnType<typeof signInAs>>['agent'],
  path: string,
  fields: Record<string, string>,
) {
  const page = await agent.get('/studies/new');
  return agent
    .post(path)
    .type('form')
    .send({ _csrf: csrfFrom(page.text), ...fields });
}

describe('studies', () => {
  it('an analyst creates a study; it is listed, shown, and the audit event holds every field as "after"', async () => {
    const { agent } = await signInAs('analyst');
    const created = await postStudy(agent, '/studies', VALID);
    expect(created.status).toBe(303);
    const id = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
    expect(id).toBeGreaterThan(0);

    const [row] = await world.database.db.select().from(studies).where(eq(studies.id, id));
    expect(row).toMatchObject({
      lowerLimit: 95,
      upperLimit: 105,
      storageTemperatureC: 25,
      storageHumidityPercent: 60,
    });
    // Repeats dropped, order kept.
    expect(row!.batches).toEqual(['OR-2401', 'OR-2402', 'OR-2403']);

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'study'),
          eq(auditEvents.recordId, String(id)),
        ),
      );
    expect(event!.action).toBe('study.created');
    expect(event!.actorUserId).toBe(world.users.analyst!.id);
    expect(event!.beforeValue).toBeNull();
    expect(event!.afterValue).toMatchObject({
      title: VALID.title,
      lowerLimit: 95,
      batches: ['OR-2401', 'OR-2402', 'OR-2403'],
    });

    const list = await agent.get('/studies');
    expect(list.status).toBe(200);
    expect(list.text).toContain(VALID.title);
    expect(list.text).toContain('95–105 % of label claim');
    const page = await agent.get(`/studies/${id}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('25 °C / 60 % RH');
    expect(page.text).toContain('data-island="study-upload"');
  });

  it('an edit records only the changed fields, before and after; a save without changes records nothing', async () => {
    const { agent } = await signInAs('analyst');
    const created = await postStudy(agent, '/studies', { ...VALID, title: 'Study to edit' });
    const id = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
    const edited = await postStudy(agent, `/studies/${id}`, {
      ...VALID,
      title: 'Study to edit',
      lowerLimit: '94.5',
      notes: 'Limit widened.',
      reasonForChange: 'Limit widened by change control (invented).',
    });
    expect(edited.status).toBe(303);
    expect(edited.headers.location).toContain('saved=updated');
    const unchanged = await postStudy(agent, `/studies/${id}`, {
      ...VALID,
      title: 'Study to edit',
      lowerLimit: '94.5',
      notes: 'Limit widened.',
    });
    expect(unchanged.headers.location).toContain('saved=unchanged');

    const events = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'study'),
          eq(auditEvents.recordId, String(id)),
        ),
      )
      .orderBy(asc(auditEvents.id));
    expect(events.map((event) => event.action)).toEqual(['study.created', 'study.updated']);
    expect(events[1]!.beforeValue).toEqual({ lowerLimit: 95, notes: 'Invented study for tests.' });
    expect(events[1]!.afterValue).toEqual({
      lowerLimit: 94.5,
      notes: 'Limit widened.',
      reasonForChange: 'Limit widened by change control (invented).',
      studyVersion: 2,
    });
  });

  it('invalid fields re-show the form with each error beside its field and the typed values kept; nothing stored', async () => {
    const { agent } = await signInAs('analyst');
    const before = await world.database.db.$count(studies, eq(studies.organisationId, world.organisationId));
    const response = await postStudy(agent, '/studies', {
      ...VALID,
      title: '  ',
      lowerLimit: '101',
      upperLimit: '99',
      storageHumidityPercent: 'sixty',
    });
    expect(response.status).toBe(400);
    expect(response.text).toMatch(/id="title-error"[^>]*>Title is required\./);
    expect(response.text).toMatch(
      /id="upperLimit-error"[^>]*>The upper limit must be above the lower limit\./,
    );
    expect(response.text).toMatch(
      /id="storageHumidityPercent-error"[^>]*>Relative humidity must be a number/,
    );
    expect(response.text).toContain('value="sixty"');
    expect(response.text).toContain('value="Orvellin 250 mg film-coated tablets (invented)"');
    const noLimits = await postStudy(agent, '/studies', { ...VALID, lowerLimit: '', upperLimit: '' });
    expect(noLimits.status).toBe(400);
    expect(noLimits.text).toMatch(/id="lowerLimit-error"[^>]*>Give a lower limit, an upper limit or both/);
    expect(await world.database.db.$count(studies, eq(studies.organisationId, world.organisationId))).toBe(
      before,
    );
  });

  it('the Q1E declaration is stored, shown, and each change is audited with its before and after values', async () => {
    const { agent } = await signInAs('analyst');
    const created = await postStudy(agent, '/studies', { ...VALID, title: 'Study with a declaration' });
    const id = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
    const [fresh] = await world.database.db.select().from(studies).where(eq(studies.id, id));
    // Nothing stated: every answer unknown (the engine takes the most conservative branch).
    expect(fresh).toMatchObject({
      storageCategory: 'unknown',
      acceleratedTemperatureC: null,
      acceleratedChange: 'unknown',
      intermediateChange: 'unknown',
      littleChange: 'unknown',
      supportingData: 'unknown',
    });
    const form = await agent.get(`/studies/${id}/edit`);
    expect(form.text).toContain(
      '<option value="unknown" selected>not stated (taken as significant)</option>',
    );
    const declared = {
      ...VALID,
      title: 'Study with a declaration',
      storageCategory: 'room-temperature',
      acceleratedTemperatureC: '40',
      intermediateTemperatureC: '30',
      acceleratedChange: 'none',
      supportingData: 'yes',
      declarationBasis: 'Accelerated report AR-17 (invented).',
      reasonForChange: 'Q1E declaration stated (invented).',
    };
    expect((await postStudy(agent, `/studies/${id}`, declared)).headers.location).toContain('saved=updated');
    const events = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'study'),
          eq(auditEvents.recordId, String(id)),
        ),
      )
      .orderBy(asc(auditEvents.id));
    expect(events.map((event) => event.action)).toEqual(['study.created', 'study.updated']);
    expect(events[0]!.afterValue).toMatchObject({ storageCategory: 'unknown', supportingData: 'unknown' });
    expect(events[1]!.beforeValue).toEqual({
      storageCategory: 'unknown',
      intermediateTemperatureC: null,
      acceleratedTemperatureC: null,
      acceleratedChange: 'unknown',
      supportingData: 'unknown',
      declarationBasis: '',
    });
    expect(events[1]!.afterValue).toEqual({
      storageCategory: 'room-temperature',
      intermediateTemperatureC: 30,
      acceleratedTemperatureC: 40,
      acceleratedChange: 'none',
      supportingData: 'yes',
      declarationBasis: 'Accelerated report AR-17 (invented).',
      reasonForChange: 'Q1E declaration stated (invented).',
      studyVersion: 2,
    });
    const page = await agent.get(`/studies/${id}`);
    expect(page.text).toContain('room temperature (ICH Q1E §2.4)');
    expect(page.text).toContain('long-term 25 °C · intermediate 30 °C · accelerated 40 °C');
    expect(page.text).toContain('not stated (taken as no)');
  });

  it('a bad declaration is refused beside its field (400, never 500) and nothing is stored', async () => {
    const { agent } = await signInAs('analyst');
    const before = await world.database.db.$count(studies, eq(studies.organisationId, world.organisationId));
    const response = await postStudy(agent, '/studies', {
      ...VALID,
      storageCategory: 'cellar',
      acceleratedChange: 'maybe',
      littleChange: '1',
      acceleratedTemperatureC: '20',
    });
    expect(response.status).toBe(400);
    expect(response.text).toMatch(
      /id="storageCategory-error"[^>]*>Choose not stated, room temperature, refrigerated or frozen\./,
    );
    expect(response.text).toMatch(
      /id="acceleratedChange-error"[^>]*>Choose not stated, none or significant\./,
    );
    expect(response.text).toMatch(/id="littleChange-error"[^>]*>Choose not stated, yes or no\./);
    const colder = await postStudy(agent, '/studies', { ...VALID, acceleratedTemperatureC: '20' });
    expect(colder.status).toBe(400);
    expect(colder.text).toMatch(
      /id="acceleratedTemperatureC-error"[^>]*>The accelerated condition must be warmer/,
    );
    const intermediate = await postStudy(agent, '/studies', {
      ...VALID,
      intermediateTemperatureC: '45',
      acceleratedTemperatureC: '40',
    });
    expect(intermediate.text).toMatch(/id="acceleratedTemperatureC-error"/);
    expect(await world.database.db.$count(studies, eq(studies.organisationId, world.organisationId))).toBe(
      before,
    );
  });

  it('a reviewer and an admin may read studies but not create or edit them (403)', async () => {
    const { agent: analyst } = await signInAs('analyst');
    const created = await postStudy(analyst, '/studies', { ...VALID, title: 'Read-only for reviewers' });
    const id = Number(/\/studies\/(\d+)/.exec(created.headers.location ?? '')?.[1]);
    for (const who of ['reviewer', 'admin']) {
      const { agent } = await signInAs(who);
      expect((await agent.get('/studies')).status).toBe(200);
      const page = await agent.get(`/studies/${id}`);
      expect(page.status).toBe(200);
      expect(page.text).not.toContain('Edit study');
      expect(page.text).not.toContain('data-island="study-upload"');
      expect((await agent.get('/studies/new')).status).toBe(403);
      const home = await agent.get('/');
      const create = await agent
        .post('/studies')
        .type('form')
        .send({ _csrf: csrfFrom(home.text), ...VALID });
      expect(create.status).toBe(403);
      const edit = await agent
        .post(`/studies/${id}`)
        .type('form')
        .send({ _csrf: csrfFrom(home.text), ...VALID });
      expect(edit.status).toBe(403);
    }
  });

  it('a study of another organisation is not found; a non-numeric id is a 400; signed out goes to sign-in', async () => {
    const other = await createTestWorld({ outsider: ['analyst'] });
    try {
      const { agent } = await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password);
      const [mine] = await world.database.db
        .select()
        .from(studies)
        .where(eq(studies.organisationId, world.organisationId))
        .limit(1);
      expect((await agent.get(`/studies/${mine!.id}`)).status).toBe(404);
      expect((await agent.get('/studies/abc')).status).toBe(400);
    } finally {
      await other.close();
    }
    const { default: request } = await import('supertest');
    const anonymous = await request(world.app).get('/studies');
    expect(anonymous.status).toBe(303);
    expect(anonymous.headers.location).toContain('/signin');
  });
});
