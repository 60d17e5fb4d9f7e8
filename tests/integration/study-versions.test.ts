import { and, asc, eq, sql } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDemoDataset } from '../../server/demo/demo-study.ts';
import { runAnalysis } from '../../server/features/analysis/analysis-runs.ts';
import { reportInput } from '../../server/features/reports/queue/render-pipeline.ts';
import { loadRenderRequest } from '../../server/features/reports/queue/render-report-job.ts';
import { renderReportHtml } from '../../server/features/reports/render/render-report.ts';
import {
  analysisRunStudyVersions,
  analysisRuns,
  auditEvents,
  reportVersions,
  studies,
  studyVersions,
} from '../../server/platform/db/schema/index.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import {
  type Agent,
  editStudy,
  reportWithoutRender,
  studyThroughForm,
  studyWithRun,
} from './study-flow-fixture.ts';

/**
 * §1 of issue 13: what an analysis was computed against is frozen with it. A study edit needs a
 * reason and appends a study version; a run keeps the version it used, and its page, export and
 * reports show that version's values with a plain note of what changed since.
 */

let world: TestWorld;
let other: TestWorld;
let analyst: Agent;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst', 'reviewer', 'admin'] });
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
});
afterAll(async () => {
  await world?.close();
  await other?.close();
});

async function versionsOf(studyId: number) {
  return world.database.db
    .select()
    .from(studyVersions)
    .where(eq(studyVersions.studyId, studyId))
    .orderBy(asc(studyVersions.versionNumber));
}

/** The database's own message for a refused statement (drizzle wraps it as the cause). */
async function refusal(statement: Promise<unknown>): Promise<string> {
  try {
    await statement;
  } catch (error) {
    return (error as { cause?: { message?: string } }).cause?.message ?? (error as Error).message;
  }
  return 'the statement was accepted';
}

describe('editing a study', () => {
  it('creating records version 1; a change without a reason is refused beside the field and writes nothing', async () => {
    const studyId = await studyThroughForm(analyst);
    expect((await versionsOf(studyId)).map((version) => [version.versionNumber, version.origin])).toEqual([
      [1, 'created'],
    ]);
    const refused = await editStudy(analyst, studyId, { lowerLimit: '90', reasonForChange: '   ' });
    expect(refused.status).toBe(400);
    expect(refused.text).toContain('id="reasonForChange-error"');
    expect(refused.text).toContain('Give the reason for this change');
    // The typed values are kept in the re-shown form.
    expect(refused.text).toContain('value="90"');
    const [study] = await world.database.db.select().from(studies).where(eq(studies.id, studyId));
    expect(study!.lowerLimit).toBe(95);
    expect(await versionsOf(studyId)).toHaveLength(1);
    const updates = await world.database.db.$count(
      auditEvents,
      and(eq(auditEvents.recordId, String(studyId)), eq(auditEvents.action, 'study.updated')),
    );
    expect(updates).toBe(0);
  });

  it('a change with a reason makes version 2 and an audit event with before, after and the reason', async () => {
    const studyId = await studyThroughForm(analyst);
    const saved = await editStudy(analyst, studyId, {
      lowerLimit: '90',
      reasonForChange: 'Specification widened by change control CC-0042 (invented).',
    });
    expect(saved.status).toBe(303);
    const versions = await versionsOf(studyId);
    expect(versions.map((version) => version.versionNumber)).toEqual([1, 2]);
    expect(versions[1]).toMatchObject({
      origin: 'edited',
      changedFields: ['lowerLimit'],
      reason: 'Specification widened by change control CC-0042 (invented).',
      recordedBy: world.users.analyst!.id,
    });
    expect(versions[0]!.values.lowerLimit).toBe(95);
    expect(versions[1]!.values.lowerLimit).toBe(90);
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.recordId, String(studyId)), eq(auditEvents.action, 'study.updated')));
    expect(event!.beforeValue).toEqual({ lowerLimit: 95 });
    expect(event!.afterValue).toEqual({
      lowerLimit: 90,
      reasonForChange: 'Specification widened by change control CC-0042 (invented).',
      studyVersion: 2,
    });
    const page = await analyst.get(`/studies/${studyId}`);
    expect(page.text).toContain('Study versions');
    expect(page.text).toContain('Specification widened by change control CC-0042 (invented).');
  });

  it('study versions are write-once in the database', async () => {
    const studyId = await studyThroughForm(analyst);
    const db = world.database.db;
    expect(
      await refusal(db.update(studyVersions).set({ reason: 'x' }).where(eq(studyVersions.studyId, studyId))),
    ).toMatch(/study_versions is write-once: UPDATE is not allowed/);
    expect(await refusal(db.delete(studyVersions).where(eq(studyVersions.studyId, studyId)))).toMatch(
      /study_versions is write-once: DELETE is not allowed/,
    );
    // The app role (npm test) has no TRUNCATE privilege; a superuser meets the trigger instead.
    expect(await refusal(db.execute(sql`truncate study_versions cascade`))).toMatch(
      /TRUNCATE is not allowed|permission denied for table study_versions/,
    );
  });
});

describe('an analysis keeps the study values it was computed against', () => {
  let studyId: number;
  let runId: number;

  beforeAll(async () => {
    ({ studyId, runId } = await studyWithRun(analyst));
    const [link] = await world.database.db
      .select()
      .from(analysisRunStudyVersions)
      .where(eq(analysisRunStudyVersions.analysisRunId, runId));
    expect(link!.origin).toBe('with-run');
    const before = await analyst.get(`/analyses/${runId}`);
    expect(before.text).toContain('not less than 95 and not more than 105 % of label claim');
    expect(before.text).toContain('Computed against study version 1');
    expect(before.text).not.toContain('The study has changed since this analysis');
    const saved = await editStudy(analyst, studyId, {
      lowerLimit: '90',
      unit: '% LC',
      reasonForChange: 'Specification widened by change control CC-0043 (invented).',
    });
    expect(saved.status).toBe(303);
  });

  it('the page shows the old criterion and says plainly what changed, when, by whom and why, with a way to run again', async () => {
    const page = await analyst.get(`/analyses/${runId}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('not less than 95 and not more than 105 % of label claim');
    expect(page.text).not.toContain('not less than 90');
    expect(page.text).toContain('The study has changed since this analysis');
    expect(page.text).toContain('unit % of label claim → % LC; lower limit 95 → 90');
    expect(page.text).toContain('by Test analyst');
    expect(page.text).toContain('reason: Specification widened by change control CC-0043 (invented).');
    expect(page.text).toContain(`href="/analyses/${runId}#rerun"`);
    // A reviewer reads the same note but is not offered a run.
    const reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password))
      .agent;
    const seen = await reviewer.get(`/analyses/${runId}`);
    expect(seen.text).toContain('The study has changed since this analysis');
    expect(seen.text).not.toContain(`href="/analyses/${runId}#rerun"`);
  });

  it('the API and the workbook export carry the frozen values and the change', async () => {
    const api = await analyst.get(`/api/analyses/${runId}`);
    expect(api.body.studyStanding).toMatchObject({ versionNumber: 1, origin: 'with-run' });
    expect(api.body.studyStanding.changedSince[0].changes).toEqual([
      { field: 'unit', label: 'unit', before: '% of label claim', after: '% LC' },
      { field: 'lowerLimit', label: 'lower limit', before: '95', after: '90' },
    ]);
    const exported = await analyst
      .get(`/api/analyses/${runId}/export.xlsx`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });
    const book = new ExcelJS.Workbook();
    await book.xlsx.load(exported.body as unknown as ArrayBuffer);
    const about = new Map<string, unknown>();
    book
      .getWorksheet('About')!
      .eachRow((row) => about.set(String(row.getCell(1).value), row.getCell(2).value));
    expect(about.get('Lower limit')).toBe(95);
    expect(about.get('Attribute')).toBe('Assay (% of label claim)');
    expect(about.get('Study version')).toBe(1);
    expect(String(about.get('Study changed since'))).toContain('lower limit 95 → 90');
  });

  it('a report rendered from it now still prints 95 in the criterion, the figure and the method statement', async () => {
    const reportId = await reportWithoutRender(world, 'analyst', runId);
    const [version] = await world.database.db
      .select({ id: reportVersions.id })
      .from(reportVersions)
      .where(eq(reportVersions.reportId, reportId));
    const request = await loadRenderRequest(world.database.db, version!.id);
    const { context, figures } = reportInput(request);
    expect(context.study).toMatchObject({ lowerLimit: 95, unit: '% of label claim' });
    const { html } = await renderReportHtml({
      template: request.template.source,
      context,
      figures,
      paper: 'A4',
    });
    // Cover criterion, method statement and the Q1E figure's limit rule, all from version 1.
    const has = (text: string) => html.includes(text);
    expect(has('95 to 105 % of label claim')).toBe(true);
    expect(has('against lower limit 95 and upper limit 105')).toBe(true);
    expect(has('90 to 105')).toBe(false);
    expect(has('lower limit 90')).toBe(false);
    expect(has('% LC')).toBe(false);
    expect(JSON.stringify(figures)).toContain('lower limit 95');
    expect(JSON.stringify(figures)).not.toContain('lower limit 90');
    // The report's detail says the study changed since its analysis.
    const detail = await analyst.get(`/api/reports/${reportId}`);
    expect(detail.body.studyChangedSince.join(' ')).toContain('lower limit 95 → 90');
  });

  it('running again computes against the current version, which has not changed since', async () => {
    const page = await analyst.get(`/analyses/${runId}`);
    const token = /name="_csrf" value="([^"]+)"/.exec(page.text)![1]!;
    const rerun = await analyst
      .post(`/analyses/${runId}/rerun`)
      .type('form')
      .send({ _csrf: token, confidenceLevel: '0.95', errorModel: 'constant', order: '' });
    expect(rerun.status).toBe(303);
    const again = await analyst.get(rerun.headers.location!);
    expect(again.text).toContain('not less than 90 and not more than 105 % LC');
    expect(again.text).toContain('Computed against study version 2');
    expect(again.text).not.toContain('The study has changed since this analysis');
  });

  it('another organisation sees neither the run nor its study', async () => {
    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    expect((await outsider.get(`/analyses/${runId}`)).status).toBe(404);
    expect((await outsider.get(`/api/analyses/${runId}`)).status).toBe(404);
    const edit = await editStudy(outsider, studyId, { lowerLimit: '80', reasonForChange: 'not mine' });
    expect(edit.status).toBe(404);
    expect((await versionsOf(studyId)).length).toBe(2);
  });
});

describe('runs recorded before study versions', () => {
  it('the migration step links them to a version recorded from the study, preferring the values the run kept itself', async () => {
    const db = world.database.db;
    const actor = { userId: world.users.analyst!.id, label: 'Test analyst' };
    const context = {
      organisationId: world.organisationId,
      analystUserId: actor.userId,
      analystName: actor.label,
    };
    const first = await createDemoDataset(db, context);
    const { runId: modelRunId } = await runAnalysis(db, {
      organisationId: world.organisationId,
      datasetId: first.datasetId,
      actor,
    });
    const [model] = await db.select().from(analysisRuns).where(eq(analysisRuns.id, modelRunId));
    // A second demo study with no version at all, and a run on it recorded the way runs were
    // before this change: no link to a study version. The run was computed with a lower limit of
    // 95 (its own options say so); the study was changed afterwards, as edits used to be, in place.
    const second = await createDemoDataset(db, context);
    const [legacy] = await db
      .insert(analysisRuns)
      .values({
        ...model!,
        id: undefined,
        runAt: undefined,
        supersedesRunId: null,
        studyId: second.studyId,
        datasetId: second.datasetId,
      })
      .returning({ id: analysisRuns.id });
    await db
      .update(studies)
      .set({ lowerLimit: 93, attribute: 'Assay (HPLC)' })
      .where(eq(studies.id, second.studyId));
    await db.execute(sql`select record_unversioned_studies_and_runs()`);
    // Idempotent: a second call links nothing twice.
    await db.execute(sql`select record_unversioned_studies_and_runs()`);
    const links = await db
      .select({ link: analysisRunStudyVersions, version: studyVersions })
      .from(analysisRunStudyVersions)
      .innerJoin(studyVersions, eq(studyVersions.id, analysisRunStudyVersions.studyVersionId))
      .where(eq(analysisRunStudyVersions.analysisRunId, legacy!.id));
    expect(links).toHaveLength(1);
    expect(links[0]!.link.origin).toBe('recorded-at-migration');
    expect(links[0]!.version).toMatchObject({ origin: 'recorded-at-migration', versionNumber: 1 });
    expect(links[0]!.version.values).toMatchObject({ lowerLimit: 93, attribute: 'Assay (HPLC)' });

    const page = await analyst.get(`/analyses/${legacy!.id}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('recorded when study versions were introduced');
    // The limit the engine used (kept in the run) wins over the later record of the study.
    expect(page.text).toContain('not less than 95 and not more than 105 % of label claim');
    expect(page.text).toContain('Assay (HPLC) (% of label claim)');
    // Later edits are reported against that record like any other.
    const saved = await editStudy(analyst, second.studyId, {
      ...(await formOf(second.studyId)),
      lowerLimit: '90',
      reasonForChange: 'Limit revised (invented).',
    });
    expect(saved.status).toBe(303);
    const after = await analyst.get(`/analyses/${legacy!.id}`);
    expect(after.text).toContain('lower limit 93 → 90');
  });

  it('a run with no link at all still opens, showing the values it kept itself', async () => {
    const db = world.database.db;
    const [model] = await db
      .select()
      .from(analysisRuns)
      .where(eq(analysisRuns.organisationId, world.organisationId))
      .limit(1);
    const [unlinked] = await db
      .insert(analysisRuns)
      .values({ ...model!, id: undefined, runAt: undefined, supersedesRunId: null })
      .returning({ id: analysisRuns.id });
    const page = await analyst.get(`/analyses/${unlinked!.id}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('recorded when study versions were introduced');
  });
});

/** The study's current values as the edit form posts them. */
async function formOf(studyId: number): Promise<Record<string, string>> {
  const form = await analyst.get(`/studies/${studyId}/edit`);
  const values: Record<string, string> = {};
  for (const match of form.text.matchAll(/<input id="study-\w+" name="(\w+)" type="text" value="([^"]*)"/g))
    values[match[1]!] = match[2]!.replace(/&amp;/g, '&');
  for (const match of form.text.matchAll(
    /<select id="study-\w+" name="(\w+)"[\s\S]*?<option value="([^"]*)" selected>/g,
  ))
    values[match[1]!] = match[2]!;
  for (const match of form.text.matchAll(/<textarea id="study-(\w+)" name="\w+"[^>]*>([^<]*)<\/textarea>/g))
    values[match[1]!] = match[2]!.replace(/&amp;/g, '&');
  return values;
}
