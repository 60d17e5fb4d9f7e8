import { and, desc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadOrganisationSettings } from '../../server/features/settings/organisation-settings.ts';
import { auditEvents, organisationSettings, organisations } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Organisation settings on the real database: defaults when no settings row exists (the contract
 * the e-signature service relies on), validation with every message beside its field and nothing
 * saved, audited changes with before/after, the lockout change taking effect at the next sign-in,
 * and the report number format used by the next report.
 */

let world: TestWorld;
type Agent = Awaited<ReturnType<typeof signIn>>['agent'];
let admin: Agent;
let token: string;

const VALID = {
  signatureMeanings: 'Reviewed\nApproved\nAuthored',
  defaultConfidenceLevel: '0.95',
  defaultTimeUnit: 'month',
  defaultValueUnit: '% of label claim',
  timeZone: 'Europe/Berlin',
  reportNumberFormat: 'RL-{YYYY}-{NNNN}',
  'preset-0-attribute': 'Assay',
  'preset-0-unit': '% of label claim',
  'preset-0-direction': 'decreasing',
  'preset-0-lowerLimit': '95,0',
  'preset-0-upperLimit': '105',
  'preset-1-attribute': '',
  'preset-1-unit': '',
  'preset-1-direction': 'decreasing',
  'preset-2-attribute': 'Impurity B',
  'preset-2-unit': '%',
  'preset-2-direction': 'increasing',
  'preset-2-upperLimit': '0.5',
};

const save = (fields: Record<string, string>, path = '/admin/settings') =>
  admin
    .post(path)
    .type('form')
    .send({ _csrf: token, ...fields });

async function settingsEvents(action: string) {
  return world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.organisationId, world.organisationId), eq(auditEvents.action, action)))
    .orderBy(desc(auditEvents.id));
}

const settingsRow = async () =>
  (
    await world.database.db
      .select()
      .from(organisationSettings)
      .where(eq(organisationSettings.organisationId, world.organisationId))
  )[0];

beforeAll(async () => {
  world = await createTestWorld(
    { admin: ['admin'], analyst: ['analyst'], member: ['reviewer'] },
    { signInRateLimit: 100 },
  );
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await admin.get('/admin/settings')).text);
});
afterAll(() => world?.close());

describe('with no settings row yet', () => {
  it('the defaults apply and the page shows them with the next report number', async () => {
    expect(await settingsRow()).toBeUndefined();
    const settings = await loadOrganisationSettings(world.database.db, world.organisationId);
    expect(settings).toMatchObject({
      signatureMeanings: ['Reviewed', 'Approved'],
      defaultConfidenceLevel: 0.95,
      reportNumberFormat: 'RL-{YYYY}-{NNNN}',
      passwordMinLength: 12,
      passwordRequireClasses: 3,
      timeZone: 'UTC',
      lockoutThreshold: 5,
    });
    const page = await admin.get('/admin/settings');
    expect(page.status).toBe(200);
    expect(page.text).toMatch(
      /Next report number[^<]*: <span class="font-mono font-semibold">RL-\d{4}-0001<\/span>/,
    );
  });
});

describe('validation', () => {
  it('every problem is reported beside its field and nothing is saved', async () => {
    const response = await save({
      ...VALID,
      signatureMeanings: '  \n ',
      defaultConfidenceLevel: '0.80',
      timeZone: 'Mars/Olympus_Mons',
      reportNumberFormat: 'RL-{YYYY}',
      'preset-2-lowerLimit': '0.6',
      'preset-0-upperLimit': 'n/a',
    });
    expect(response.status).toBe(400);
    const text = response.text;
    expect(text).toContain('Nothing was saved: 6 fields need attention.');
    expect(text).toMatch(/id="signatureMeanings-error"[^>]*>List at least one meaning/);
    expect(text).toMatch(/id="defaultConfidenceLevel-error"[^>]*>Choose 0.90, 0.95 or 0.99./);
    expect(text).toMatch(/id="timeZone-error"[^>]*>Not an IANA time zone/);
    expect(text).toMatch(/id="reportNumberFormat-error"[^>]*>The format needs a running number/);
    expect(text).toContain('Upper limit must be a number');
    expect(text).toContain('The upper limit must be above the lower limit.');
    // The admin's input is kept in the form.
    expect(text).toContain('value="Mars/Olympus_Mons"');
    expect(await settingsRow()).toBeUndefined();
    expect(await settingsEvents('organisation-settings.changed')).toEqual([]);
  });

  it('report number formats: unknown tokens, two running numbers, unsafe characters are refused', async () => {
    for (const [format, message] of [
      ['RL-{MM}-{NNNN}', '{MM} is not a token'],
      ['{NNNN}-{NN}', 'only one running number'],
      ['RL/{YYYY}/{NNNN}', 'characters a report number cannot hold'],
      ['RL-{NNNN', 'A brace is not closed'],
    ] as const) {
      const response = await save({ ...VALID, reportNumberFormat: format });
      expect(response.status).toBe(400);
      expect(response.text).toContain(message);
    }
  });

  it('the security settings are bounded; each problem is shown beside its field', async () => {
    const response = await save(
      { passwordMinLength: '6', passwordRequireClasses: '5', lockoutThreshold: '1', lockoutMinutes: 'soon' },
      '/admin/settings/security',
    );
    expect(response.status).toBe(400);
    expect(response.text).toMatch(/id="passwordMinLength-error"[^>]*>The minimum length must be at least 8./);
    expect(response.text).toMatch(/id="passwordRequireClasses-error"[^>]*>[^<]*at most 4./);
    expect(response.text).toMatch(/id="lockoutThreshold-error"[^>]*>[^<]*at least 3./);
    expect(response.text).toMatch(/id="lockoutMinutes-error"[^>]*>[^<]*whole number/);
    expect(await settingsEvents('security-settings.changed')).toEqual([]);
  });
});

describe('saving', () => {
  it('saves the settings, audits only the changed fields with before and after', async () => {
    const response = await save(VALID);
    expect(response.status).toBe(303);
    const row = await settingsRow();
    expect(row!.signatureMeanings).toEqual(['Reviewed', 'Approved', 'Authored']);
    expect(row!.acceptancePresets).toEqual([
      {
        attribute: 'Assay',
        unit: '% of label claim',
        direction: 'decreasing',
        lowerLimit: 95,
        upperLimit: 105,
      },
      { attribute: 'Impurity B', unit: '%', direction: 'increasing', lowerLimit: null, upperLimit: 0.5 },
    ]);
    const [organisation] = await world.database.db
      .select()
      .from(organisations)
      .where(eq(organisations.id, world.organisationId));
    expect(organisation!.timeZone).toBe('Europe/Berlin');
    const [event] = await settingsEvents('organisation-settings.changed');
    expect(Object.keys(event!.afterValue as object).sort()).toEqual([
      'acceptancePresets',
      'signatureMeanings',
      'timeZone',
    ]);
    expect(event!.beforeValue).toMatchObject({
      signatureMeanings: ['Reviewed', 'Approved'],
      timeZone: 'UTC',
      acceptancePresets: [],
    });
    expect(event!.afterValue).toMatchObject({ timeZone: 'Europe/Berlin' });

    const again = await save(VALID);
    expect(again.status).toBe(303);
    expect((await admin.get('/admin/settings')).text).toContain('Nothing had changed.');
    expect(await settingsEvents('organisation-settings.changed')).toHaveLength(1);
  });

  it('the API answers the saved settings to admins', async () => {
    const response = await admin.get('/api/admin/settings');
    expect(response.status).toBe(200);
    expect(response.body).toMatchObject({
      timeZone: 'Europe/Berlin',
      signatureMeanings: ['Reviewed', 'Approved', 'Authored'],
    });
    expect(response.body.nextReportNumber).toMatch(/^RL-\d{4}-0001$/);
  });

  it('a lockout change takes effect at the next sign-in', async () => {
    const member = world.users.member!;
    const response = await save(
      { passwordMinLength: '14', passwordRequireClasses: '3', lockoutThreshold: '3', lockoutMinutes: '20' },
      '/admin/settings/security',
    );
    expect(response.status).toBe(303);
    const [event] = await settingsEvents('security-settings.changed');
    expect(event!.beforeValue).toEqual({ passwordMinLength: 12, lockoutThreshold: 5, lockoutMinutes: 15 });
    expect(event!.afterValue).toEqual({ passwordMinLength: 14, lockoutThreshold: 3, lockoutMinutes: 20 });
    for (let attempt = 1; attempt <= 2; attempt += 1)
      expect((await signIn(world.app, member.email, 'wrong-password')).response.text).toContain('not right');
    // The third failure locks (it took five before the change), for the new 20 minutes.
    const third = await signIn(world.app, member.email, 'wrong-password');
    // The refusal says nothing of the lock (no account enumeration); the audit trail records it.
    expect(third.response.status).toBe(401);
    expect(third.response.text).toContain('not right');
    expect(third.response.text).not.toContain('20 minutes');
    const [locked] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.actorUserId, member.id), eq(auditEvents.action, 'account.locked')));
    expect(locked?.afterValue).toMatchObject({ afterFailures: 3, minutes: 20 });
    expect((await signIn(world.app, member.email, member.password)).response.status).toBe(401);
    // The policy shown to administrators follows too.
    expect((await admin.get('/admin/people')).text).toContain('At least 14 characters.');
  });
});

describe('the report number format', () => {
  it('previews the next number of a typed format without saving it', async () => {
    const response = await save({ ...VALID, intent: 'preview', reportNumberFormat: 'QC.{YY}.{NNNNN}' });
    expect(response.status).toBe(200);
    expect(response.text).toMatch(
      /not saved yet\): <span class="font-mono font-semibold">QC\.\d{2}\.00001<\/span>/,
    );
    expect((await settingsRow())!.reportNumberFormat).toBe('RL-{YYYY}-{NNNN}');
  });

  it('the next report gets its number in the saved format, counting on from there', async () => {
    expect((await save({ ...VALID, reportNumberFormat: 'QC.{YY}.{NNNNN}' })).status).toBe(303);
    const analyst = world.users.analyst!;
    const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, analyst);
    const { agent } = await signIn(world.app, analyst.email, analyst.password);
    const csrf = csrfFrom((await agent.get('/')).text);
    const create = () => agent.post(`/api/analyses/${runId}/reports`).set('x-csrf-token', csrf).send({});
    const first = await create();
    expect(first.status).toBe(201);
    // The year is the database clock's in the organisation's zone (Europe/Berlin, saved above).
    const [clock] = (
      await world.database.pool.query<{ yy: string }>(
        `select to_char(now() at time zone 'Europe/Berlin', 'YY') as yy`,
      )
    ).rows;
    expect(first.body.reportNumber).toBe(`QC.${clock!.yy}.00001`);
    const second = await create();
    expect(second.body.reportNumber).toBe(`QC.${clock!.yy}.00002`);
    const page = await admin.get('/admin/settings');
    expect(page.text).toContain(`QC.${clock!.yy}.00003`);
  });
});

describe('time zones', () => {
  it('a current IANA name the runtime lists under an older spelling is accepted and saved as typed', async () => {
    // IANA tzdata's current name is Asia/Kolkata; CLDR (Intl.supportedValuesOf) may list Asia/Calcutta.
    expect((await save({ ...VALID, timeZone: 'Asia/Kolkata' })).status).toBe(303);
    const settings = await loadOrganisationSettings(world.database.db, world.organisationId);
    expect(settings.timeZone).toBe('Asia/Kolkata');
  });
});
