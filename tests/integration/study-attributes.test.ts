import { and, asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, studies, studyVersions } from '../../server/platform/db/schema/index.ts';
import { STUDY_FIELDS } from '../../shared/api/studies.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import {
  type Agent,
  importUpload,
  runThroughApi,
  STUDY_FORM,
  tokenOf,
  uploadVeltrazine,
} from './study-flow-fixture.ts';

/**
 * Issue 15 §1: a study lists its attributes. Through the study form (no JavaScript needed): a
 * study of three attributes is created, shown as a table, edited attribute by attribute with each
 * change a new study version; refusals name their field and store nothing; versions recorded
 * before attributes were listed read without a spurious change.
 */

let world: TestWorld;
let analyst: Agent;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
});
afterAll(() => world?.close());

function group(position: number, fields: Record<string, string>): Record<string, string> {
  const blank = {
    name: '',
    unit: '',
    direction: 'decreasing',
    lowerLimit: '',
    upperLimit: '',
    workingOrder: '',
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: '',
    massBalanceRole: '',
  };
  return Object.fromEntries(
    Object.entries({ ...blank, ...fields }).map(([field, value]) => [
      `attributes[${position}][${field}]`,
      value,
    ]),
  );
}

/** Assay, a degradation product fitted at a stated value below its limit, and water; one blank group. */
const THREE_ATTRIBUTES = {
  ...STUDY_FORM,
  title: 'Veltrazine, three attributes (invented)',
  workingOrder: '',
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: '',
  massBalanceRole: 'assay',
  ...group(2, {
    name: 'Impurity B',
    unit: '% of label claim',
    direction: 'increasing',
    upperLimit: '0,5',
    workingOrder: '1',
    workingOrderReason: 'protocol PL-7 §3 states first-order formation (invented)',
    censoredRule: 'stated-value',
    censoredValue: '0.025',
    massBalanceRole: 'degradant',
  }),
  ...group(3, { name: 'Water', unit: '% w/w', direction: 'increasing', upperLimit: '3.0' }),
  ...group(4, {}),
};

async function post(path: string, fields: Record<string, string>) {
  return analyst
    .post(path)
    .type('form')
    .send({ _csrf: await tokenOf(analyst), ...fields });
}

const idOf = (location: string | undefined) => Number(/\/studies\/(\d+)/.exec(location ?? '')?.[1]);

async function studyRow(studyId: number) {
  const [row] = await world.database.db.select().from(studies).where(eq(studies.id, studyId));
  return row!;
}

async function versionsOf(studyId: number) {
  return world.database.db
    .select()
    .from(studyVersions)
    .where(eq(studyVersions.studyId, studyId))
    .orderBy(asc(studyVersions.versionNumber));
}

async function studyCount() {
  return world.database.db.$count(studies, eq(studies.organisationId, world.organisationId));
}

const ENTITIES: Record<string, string> = {
  '&amp;': '&',
  '&lt;': '<',
  '&gt;': '>',
  '&quot;': '"',
  '&#x27;': "'",
  '&#x60;': '`',
  '&#x3D;': '=',
};
const decoded = (text: string) =>
  text.replace(/&(amp|lt|gt|quot|#x27|#x60|#x3D);/g, (entity) => ENTITIES[entity]!);

/** What the form shows, as a browser would post it back (text fields and selected options). */
function formValues(html: string): Record<string, string> {
  const values: Record<string, string> = { _csrf: /name="_csrf" value="([^"]+)"/.exec(html)![1]! };
  for (const match of html.matchAll(/<input id="study-[\w-]+" name="([^"]+)" type="text" value="([^"]*)"/g)) {
    values[decoded(match[1]!)] = decoded(match[2]!);
  }
  for (const match of html.matchAll(/<select id="study-[\w-]+" name="([^"]+)"[^>]*>([\s\S]*?)<\/select>/g)) {
    const selected = /<option value="([^"]*)" selected>/.exec(match[2]!);
    values[decoded(match[1]!)] = decoded(selected?.[1] ?? /<option value="([^"]*)"/.exec(match[2]!)![1]!);
  }
  for (const match of html.matchAll(/<textarea id="study-\w+" name="(\w+)"[^>]*>([^<]*)<\/textarea>/g)) {
    values[match[1]!] = decoded(match[2]!);
  }
  return values;
}

async function editForm(studyId: number) {
  return formValues((await analyst.get(`/studies/${studyId}/edit`)).text);
}

describe('a study of three attributes through the form', () => {
  let studyId: number;

  beforeAll(async () => {
    const created = await post('/studies', THREE_ATTRIBUTES);
    expect(created.status).toBe(303);
    studyId = idOf(created.headers.location);
  });

  it('stores every attribute, records them all in version 1 and in the audit event', async () => {
    const row = await studyRow(studyId);
    expect(row).toMatchObject({
      attribute: 'Assay',
      lowerLimit: 95,
      censoredRule: 'exclude',
      censoredValue: null,
      massBalanceRole: 'assay',
    });
    expect(row.additionalAttributes).toEqual([
      {
        name: 'Impurity B',
        unit: '% of label claim',
        direction: 'increasing',
        lowerLimit: null,
        upperLimit: 0.5,
        workingOrder: 1,
        workingOrderReason: 'protocol PL-7 §3 states first-order formation (invented)',
        censoredRule: 'stated-value',
        censoredValue: 0.025,
        massBalanceRole: 'degradant',
      },
      {
        name: 'Water',
        unit: '% w/w',
        direction: 'increasing',
        lowerLimit: null,
        upperLimit: 3,
        workingOrder: null,
        workingOrderReason: '',
        censoredRule: 'exclude',
        censoredValue: null,
        massBalanceRole: null,
      },
    ]);
    const [version] = await versionsOf(studyId);
    expect(version!.changedFields).toEqual([...STUDY_FIELDS]);
    expect(version!.values).toMatchObject({
      massBalanceRole: 'assay',
      censoredRule: 'exclude',
      additionalAttributes: row.additionalAttributes,
    });
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.recordId, String(studyId)), eq(auditEvents.action, 'study.created')));
    expect(event!.afterValue).toMatchObject({ additionalAttributes: row.additionalAttributes });
  });

  it('the study page lists the three attributes alike in one table', async () => {
    const page = await analyst.get(`/studies/${studyId}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('3 attributes: Assay, Impurity B, Water');
    const table = /<table[^>]*id="study-attributes"[\s\S]*?<\/table>/.exec(page.text)![0];
    const rows = [...table.matchAll(/<tr class="border-b border-rule\/60">([\s\S]*?)<\/tr>/g)].map((match) =>
      [...match[1]!.matchAll(/<t[hd][^>]*>([^<]*)<\/t[hd]>/g)].map((cell) => decoded(cell[1]!)),
    );
    expect(rows).toEqual([
      [
        'Assay',
        '% of label claim',
        'decreasing',
        '95–105 % of label claim',
        'none: only what the data name',
        'excluded from the fit',
        'assay',
      ],
      [
        'Impurity B',
        '% of label claim',
        'increasing',
        '≤ 0.5 % of label claim',
        'first order — protocol PL-7 §3 states first-order formation (invented)',
        'fitted at 0.025 % of label claim',
        'degradation product',
      ],
      [
        'Water',
        '% w/w',
        'increasing',
        '≤ 3 % w/w',
        'none: only what the data name',
        'excluded from the fit',
        'none',
      ],
    ]);
    const list = await analyst.get('/studies');
    expect(list.text).toContain('Assay, Impurity B, Water');
    expect(list.text).toContain(
      'Assay: 95–105 % of label claim; Impurity B: ≤ 0.5 % of label claim; Water: ≤ 3 % w/w',
    );
  });

  it('the edit form shows each attribute in its group; saving it untouched changes nothing', async () => {
    const values = await editForm(studyId);
    expect(values).toMatchObject({
      attribute: 'Assay',
      massBalanceRole: 'assay',
      'attributes[2][name]': 'Impurity B',
      'attributes[2][upperLimit]': '0.5',
      'attributes[2][workingOrder]': '1',
      'attributes[2][censoredRule]': 'stated-value',
      'attributes[2][censoredValue]': '0.025',
      'attributes[2][massBalanceRole]': 'degradant',
      'attributes[3][name]': 'Water',
      'attributes[3][unit]': '% w/w',
      'attributes[3][massBalanceRole]': '',
    });
    expect(Object.keys(values).some((key) => key.startsWith('attributes[4]'))).toBe(false);
    const saved = await post(`/studies/${studyId}`, values);
    expect(saved.headers.location).toContain('saved=unchanged');
    expect(await versionsOf(studyId)).toHaveLength(1);
  });

  it("changing only one attribute's limit is a new version naming that change, in the history and the audit trail", async () => {
    const before = (await studyRow(studyId)).additionalAttributes;
    const saved = await post(`/studies/${studyId}`, {
      ...(await editForm(studyId)),
      'attributes[3][upperLimit]': '5',
      reasonForChange: 'Water limit revised by change control CC-0107 (invented).',
    });
    expect(saved.status).toBe(303);
    expect(saved.headers.location).toContain('saved=updated');
    const versions = await versionsOf(studyId);
    expect(versions).toHaveLength(2);
    expect(versions[1]!.changedFields).toEqual(['additionalAttributes']);
    expect((versions[1]!.values.additionalAttributes as { upperLimit: number }[])[1]!.upperLimit).toBe(5);
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.recordId, String(studyId)), eq(auditEvents.action, 'study.updated')));
    expect(event!.beforeValue).toEqual({ additionalAttributes: before });
    expect(event!.afterValue).toEqual({
      additionalAttributes: [before[0], { ...before[1], upperLimit: 5 }],
      reasonForChange: 'Water limit revised by change control CC-0107 (invented).',
      studyVersion: 2,
    });
    const page = await analyst.get(`/studies/${studyId}`);
    expect(page.text).toContain('<li>Water: upper limit 3 → 5</li>');
    expect(page.text).toContain('≤ 5 % w/w');
    // Saved again as shown: still two versions (the stored list compares by content).
    const again = await post(`/studies/${studyId}`, await editForm(studyId));
    expect(again.headers.location).toContain('saved=unchanged');
    expect(await versionsOf(studyId)).toHaveLength(2);
  });

  it("the first attribute's change is named with it; removing an attribute is a version saying so", async () => {
    const saved = await post(`/studies/${studyId}`, {
      ...(await editForm(studyId)),
      lowerLimit: '90',
      reasonForChange: 'Assay limit widened (invented).',
    });
    expect(saved.status).toBe(303);
    const removedForm = await post(`/studies/${studyId}`, {
      ...(await editForm(studyId)),
      formAction: 'remove-attribute-2',
    });
    expect(removedForm.status).toBe(200);
    const values = formValues(removedForm.text);
    expect(values['attributes[2][name]']).toBe('Water');
    expect(values['attributes[3][name]']).toBeUndefined();
    const removed = await post(`/studies/${studyId}`, {
      ...values,
      reasonForChange: 'Impurity B is tested in a separate study (invented).',
    });
    expect(removed.status).toBe(303);
    const versions = await versionsOf(studyId);
    expect(versions.map((version) => version.changedFields)).toEqual([
      [...STUDY_FIELDS],
      ['additionalAttributes'],
      ['lowerLimit'],
      ['additionalAttributes'],
    ]);
    const page = await analyst.get(`/studies/${studyId}`);
    expect(page.text).toContain('<li>Assay: lower limit 95 → 90</li>');
    expect(page.text).toContain(
      '<li>attribute removed Impurity B (increasing, ≤ 0.5 % of label claim) → none</li>',
    );
    expect(page.text).toContain('2 attributes: Assay, Water');
  });
});

describe('adding and removing attribute groups without JavaScript', () => {
  it('"Add another attribute" shows the form again with one more empty group and everything typed; nothing is stored', async () => {
    const count = await studyCount();
    const typed = { ...THREE_ATTRIBUTES, title: 'Typed, not saved (invented)' };
    for (const key of Object.keys(typed))
      if (key.startsWith('attributes[4]')) delete typed[key as keyof typeof typed];
    const response = await post('/studies', { ...typed, formAction: 'add-attribute' });
    expect(response.status).toBe(200);
    const values = formValues(response.text);
    expect(values).toMatchObject({
      title: 'Typed, not saved (invented)',
      'attributes[2][name]': 'Impurity B',
      'attributes[2][censoredValue]': '0.025',
      'attributes[3][upperLimit]': '3.0',
      'attributes[4][name]': '',
      'attributes[4][direction]': 'decreasing',
    });
    expect(response.text).toMatch(
      /<input id="study-attributes-4-name" name="attributes\[4\]\[name\]"[^>]* autofocus/,
    );
    expect(response.text.match(/ autofocus/g)).toHaveLength(1);
    expect(response.text).toContain(
      'Attribute 4 was added to the form. Nothing is saved until you save the study.',
    );
    expect(response.text).toContain('Remove attribute 4');
    expect(await studyCount()).toBe(count);
    // The page posted back as shown (empty group 4 included) creates the study of three.
    const created = await post('/studies', values);
    expect(created.status).toBe(303);
    expect((await studyRow(idOf(created.headers.location))).additionalAttributes).toHaveLength(2);
  });

  it('"Remove" takes one group out and moves the later ones up; the first attribute can go too', async () => {
    const response = await post('/studies', { ...THREE_ATTRIBUTES, formAction: 'remove-attribute-1' });
    expect(response.status).toBe(200);
    const values = formValues(response.text);
    expect(values).toMatchObject({
      attribute: 'Impurity B',
      upperLimit: '0,5',
      censoredRule: 'stated-value',
      massBalanceRole: 'degradant',
      'attributes[2][name]': 'Water',
      'attributes[3][name]': '',
    });
    expect(values['attributes[4][name]']).toBeUndefined();
    expect(response.text).toContain('Attribute 1 (Assay) was removed from the form');
    // One group left: no button removes it.
    const single = await post('/studies', { ...STUDY_FORM, formAction: 'add-attribute' });
    const one = await post('/studies', { ...formValues(single.text), formAction: 'remove-attribute-2' });
    expect(one.text).not.toContain('Remove attribute');
  });
});

describe('refusals name the field and store nothing', () => {
  it('errors in further groups are beside their fields, marked and described, and nothing is stored', async () => {
    const count = await studyCount();
    const response = await post('/studies', {
      ...THREE_ATTRIBUTES,
      'attributes[2][censoredValue]': '',
      'attributes[3][name]': 'assay',
      'attributes[3][upperLimit]': '',
    });
    expect(response.status).toBe(400);
    expect(response.text).toContain('Nothing was saved: 3 fields need attention.');
    for (const [field, message] of [
      ['attributes-2-censoredValue', 'Give the value a result below the limit is fitted at'],
      ['attributes-3-name', 'The study already lists an attribute named “assay”'],
      ['attributes-3-lowerLimit', 'Give a lower limit, an upper limit or both'],
    ] as const) {
      expect(response.text).toMatch(
        new RegExp(`id="study-${field}"[^>]*aria-describedby="${field}-error" aria-invalid="true"`),
      );
      expect(response.text).toMatch(new RegExp(`id="${field}-error"[^>]*>${message}`));
    }
    // What was typed is kept.
    expect(formValues(response.text)['attributes[3][name]']).toBe('assay');
    expect(await studyCount()).toBe(count);
  });

  it('a refused edit writes no version, no audit event and no change', async () => {
    const created = await post('/studies', THREE_ATTRIBUTES);
    const studyId = idOf(created.headers.location);
    const before = await studyRow(studyId);
    const refused = await post(`/studies/${studyId}`, {
      ...(await editForm(studyId)),
      'attributes[2][lowerLimit]': '1',
      'attributes[2][upperLimit]': '0.5',
      reasonForChange: 'Attempted change (invented).',
    });
    expect(refused.status).toBe(400);
    expect(refused.text).toMatch(
      /id="attributes-2-upperLimit-error"[^>]*>The upper limit must be above the lower limit\./,
    );
    const noReason = await post(`/studies/${studyId}`, {
      ...(await editForm(studyId)),
      'attributes[2][upperLimit]': '0.6',
    });
    expect(noReason.status).toBe(400);
    expect(noReason.text).toContain('id="reasonForChange-error"');
    expect(await studyRow(studyId)).toEqual(before);
    expect(await versionsOf(studyId)).toHaveLength(1);
    const updates = await world.database.db.$count(
      auditEvents,
      and(eq(auditEvents.recordId, String(studyId)), eq(auditEvents.action, 'study.updated')),
    );
    expect(updates).toBe(0);
  });
});

describe('a version recorded before studies listed attributes', () => {
  it('reads with the defaults: the run made against it and the next edit show no spurious change', async () => {
    const db = world.database.db;
    const [study] = await db
      .insert(studies)
      .values({
        organisationId: world.organisationId,
        createdBy: world.users.analyst!.id,
        title: 'Veltrazine, recorded before attributes were listed (invented)',
        product: STUDY_FORM.product,
        attribute: 'Assay',
        unit: '% of label claim',
        direction: 'decreasing',
        lowerLimit: 95,
        upperLimit: 105,
        storageTemperatureC: 25,
        storageHumidityPercent: 60,
        batches: ['VZ-001', 'VZ-002', 'VZ-003'],
      })
      .returning();
    // Version 1 as it was written before migration 0020: no key for the new fields.
    const oldValues = Object.fromEntries(
      STUDY_FIELDS.filter(
        (field) =>
          !['censoredRule', 'censoredValue', 'massBalanceRole', 'additionalAttributes'].includes(field),
      ).map((field) => [field, study![field]]),
    );
    await db.insert(studyVersions).values({
      organisationId: world.organisationId,
      studyId: study!.id,
      versionNumber: 1,
      values: oldValues,
      changedFields: Object.keys(oldValues),
      reason: 'Study created.',
      origin: 'created',
      recordedBy: world.users.analyst!.id,
    });
    const imported = await importUpload(analyst, await uploadVeltrazine(analyst, study!.id));
    expect(imported.status).toBe(201);
    const runId = await runThroughApi(analyst, imported.body.datasetId as number);
    const unchanged = await analyst.get(`/analyses/${runId}`);
    expect(unchanged.status).toBe(200);
    expect(unchanged.text).not.toContain('Version 2');

    const saved = await post(`/studies/${study!.id}`, {
      ...(await editForm(study!.id)),
      notes: 'Pull at 9 months added (invented).',
      reasonForChange: 'Protocol amendment (invented).',
    });
    expect(saved.status).toBe(303);
    const versions = await versionsOf(study!.id);
    expect(versions[1]!.changedFields).toEqual(['notes']);
    const page = await analyst.get(`/studies/${study!.id}`);
    expect(page.text).toContain('<li>notes none → Pull at 9 months added (invented).</li>');
    expect(page.text).not.toContain('rule for results below the limit');
    expect(page.text).not.toContain('further attributes');
    const run = await analyst.get(`/analyses/${runId}`);
    expect(run.status).toBe(200);
    expect(run.text).toContain('notes none → Pull at 9 months added (invented).');
    expect(run.text).not.toContain('rule for results below the limit');
    expect(run.text).not.toContain('mass-balance role');
  });
});
