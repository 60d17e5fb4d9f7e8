// A temperature-log assessment attached to a report: the attachment renders a new report version
// (real render worker, Chromium) that prints the assessment as an excursion assessment with its
// stored figure, so it goes through the same review and signature; the attachment is write-once
// and stays within the organisation.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import {
  reportVersions,
  reportVersionTemperatureLogs,
  temperatureLogAssessments,
} from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { startTestRenderWorker, waitForRender } from './render-fixture.ts';
import { type Agent, studyWithRun } from './study-flow-fixture.ts';

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-temperature-log-reports-'));
process.env.REPORTS_DIR = reportsDir;
const storage = reportStorage(reportsDir);
const STORE_ROOM = readFileSync(
  path.resolve(import.meta.dirname, '..', 'fixtures', 'temperature-log-store-room.csv'),
);

let world: TestWorld;
let other: TestWorld;
let worker: RenderWorker;
let analyst: Agent;
let reviewer: Agent;
let reportId: number;
let assessmentId: number;

async function token(agent: Agent, page = '/'): Promise<string> {
  return csrfFrom((await agent.get(page)).text);
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ outsider: ['analyst'] });
  worker = await startTestRenderWorker(world.database.db, storage);
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password)).agent;
  const { studyId, runId } = await studyWithRun(analyst);
  const created = await analyst
    .post(`/api/analyses/${runId}/reports`)
    .set('x-csrf-token', await token(analyst))
    .send({});
  expect(created.status).toBe(201);
  reportId = created.body.reportId;
  await waitForRender(world.database.db, storage, reportId, 1);
  const form = await analyst.get('/temperature-logs/new');
  const assessed = await analyst
    .post('/temperature-logs')
    .field('_csrf', csrfFrom(form.text))
    .field('title', 'Store room B, July 2026 (invented)')
    .field('timeColumn', 'Recorded at')
    .field('temperatureColumn', 'Temperature')
    .field('rangeMaxC', '25')
    .field('window', '24 h')
    .field('studyId', String(studyId))
    .field('latestValue', '99.0')
    .attach('file', STORE_ROOM, 'store-room.csv');
  expect(assessed.status).toBe(303);
  assessmentId = Number(/\/temperature-logs\/(\d+)/.exec(assessed.headers.location ?? '')?.[1]);
}, 180_000);

afterAll(async () => {
  await worker?.close();
  await other?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
});

describe('temperature-log assessments in reports', () => {
  it('attaching renders a new version that prints the assessment and its stored figure', async () => {
    const page = `/temperature-logs/${assessmentId}`;
    const attached = await analyst
      .post(`${page}/attach`)
      .type('form')
      .send({ _csrf: await token(analyst, page), reportId: String(reportId) });
    expect(attached.status).toBe(303);
    expect(attached.headers.location).toBe(`/app/reports/${reportId}?version=2`);
    const version = await waitForRender(world.database.db, storage, reportId, 2);
    const links = await world.database.db
      .select()
      .from(reportVersionTemperatureLogs)
      .where(eq(reportVersionTemperatureLogs.reportVersionId, version.id));
    expect(links.map((link) => [link.assessmentId, link.position])).toEqual([[assessmentId, 1]]);

    const [assessment] = await world.database.db
      .select()
      .from(temperatureLogAssessments)
      .where(eq(temperatureLogAssessments.id, assessmentId));
    const html = version.html ?? '';
    expect(html).toContain('Temperature excursions');
    expect(html).toContain('Store room B, July 2026 (invented)');
    expect(html).toContain(assessment!.sha256);
    expect(html).toContain('Mean kinetic temperature, whole log');
    expect(html).toContain('what the log cost');
    // The stored figure, drawn once: its drawing is the same, only its ids are renamed.
    const stored = assessment!.figureSvg.replace(/(id="|url\(#|href="#)templog-/g, '$1');
    const printed =
      /<figure class="report-figure" id="figure-temperature-log-\d+">(<svg[\s\S]*?<\/svg>)/.exec(html)?.[1] ??
      '';
    expect(printed.replace(/(id="|url\(#|href="#)figure-\d+-/g, '$1')).toBe(stored);

    // Numbered in reading order: after temperature dependence, before Appendix A's series figures.
    const numberOf = (id: RegExp) =>
      [...html.matchAll(/<figure class="report-figure" id="figure-([^"]+)">[\s\S]*?Figure (\d+)\./g)]
        .filter((match) => id.test(match[1] ?? ''))
        .map((match) => Number(match[2]));
    const [logNumber] = numberOf(/^temperature-log-/);
    expect(numberOf(/^arrhenius$/)[0]).toBeLessThan(logNumber!);
    expect(Math.min(...numberOf(/^series-/))).toBeGreaterThan(logNumber!);

    // Version 1 stays as it was, without the assessment.
    const [first] = await world.database.db
      .select()
      .from(reportVersions)
      .where(and(eq(reportVersions.reportId, reportId), eq(reportVersions.versionNumber, 1)));
    expect(first!.html ?? '').not.toContain('Temperature excursions');

    const logPage = await reviewer.get(page);
    expect(logPage.text).toMatch(
      new RegExp(`href="/app/reports/${reportId}">RL-\\d{4}-\\d{4} version 2</a>`),
    );
    expect(logPage.text).not.toContain('Attach and render');
  }, 120_000);

  it('a later version keeps the attachments unless told otherwise; the link is write-once', async () => {
    const again = await analyst
      .post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', await token(analyst))
      .send({});
    expect(again.status).toBe(201);
    const version = await waitForRender(world.database.db, storage, reportId, again.body.versionNumber);
    expect(version.html ?? '').toContain('Temperature excursions');
    const refusal = await world.database.db
      .execute(
        sql`update report_version_temperature_logs set position = 2 where report_version_id = ${version.id}`,
      )
      .then(
        () => 'accepted',
        (error: Error & { cause?: Error }) => error.cause?.message ?? error.message,
      );
    expect(refusal).toMatch(/write-once/);
  }, 120_000);

  it('only an analyst of the organisation attaches, and only the organisation’s assessments', async () => {
    const page = `/temperature-logs/${assessmentId}`;
    const byReviewer = await reviewer
      .post(`${page}/attach`)
      .type('form')
      .send({ _csrf: await token(reviewer, page), reportId: String(reportId) });
    expect(byReviewer.status).toBe(403);
    const outsider = (await signIn(other.app, other.users.outsider!.email, other.users.outsider!.password))
      .agent;
    const foreign = await outsider
      .post(`${page}/attach`)
      .type('form')
      .send({ _csrf: await token(outsider, '/temperature-logs'), reportId: String(reportId) });
    expect(foreign.status).toBe(404);
    const forged = await analyst
      .post(`${page}/attach`)
      .type('form')
      .send({ reportId: String(reportId) });
    expect(forged.status).toBe(403);
    const viaApi = await analyst
      .post(`/api/reports/${reportId}/versions`)
      .set('x-csrf-token', await token(analyst))
      .send({ temperatureLogIds: [assessmentId + 10_000] });
    expect(viaApi.status).toBe(404);
  });
});
