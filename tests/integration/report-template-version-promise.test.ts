import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { createReport, createReportVersion } from '../../server/features/reports/reports.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import type { TemplateSourceInput } from '../../shared/api/templates.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Issue 13 §3: what the templates page promises about a report's template version is what
 * happens. A rendered version keeps the template version it was printed with; rendering an
 * existing report again makes a new version with the template published at that moment (not the
 * one the report was created with), and the report's page names each version's template version.
 */

type Agent = Awaited<ReturnType<typeof signIn>>['agent'];

let world: TestWorld;
let queue: RenderQueue;
let admin: Agent;
let adminToken: string;
let analyst: Agent;

const analystActor = (): SessionUser => ({
  id: world.users.analyst!.id,
  email: world.users.analyst!.email,
  fullName: 'Test analyst',
  organisationId: world.organisationId,
  organisationName: 'test',
  roles: ['analyst'],
});

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], analyst: ['analyst'] });
  const sender = openRenderQueue({
    config: parseRenderConfig(),
    pool: world.database.pool,
    supervise: false,
  });
  // Versions are created for their template version only; nothing renders in this file.
  queue = { ...sender, enqueue: async () => 'not-sent' };
  ({ agent: admin } = await signIn(world.app, world.users.admin!.email, world.users.admin!.password));
  adminToken = csrfFrom((await admin.get('/').redirects(3).expect(200)).text);
  ({ agent: analyst } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password));
}, 120_000);
afterAll(async () => {
  await world?.close();
});

describe("a report's template version", () => {
  it('a new version of an existing report uses the template published then; earlier versions keep theirs', async () => {
    const { runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!);
    const { reportId } = await createReport(
      world.database.db,
      queue,
      analystActor(),
      runId,
      { title: 'Template promise' },
      {},
    );
    const { body } = await admin.get('/api/admin/templates').expect(200);
    const template = body.templates[0];
    const source = (
      await admin
        .get(`/api/admin/templates/${template.id}/versions/${template.publishedVersionId}`)
        .expect(200)
    ).body.source as TemplateSourceInput;
    const saved = await admin
      .post(`/api/admin/templates/${template.id}/versions`)
      .set('x-csrf-token', adminToken)
      .send({ source: { ...source, body: `${source.body}\n<!-- v2 -->` }, note: 'Second' })
      .expect(201);
    await admin
      .post(`/api/admin/templates/${template.id}/publish`)
      .set('x-csrf-token', adminToken)
      .send({ versionId: saved.body.version.id, reason: 'New footer', confirmed: true })
      .expect(200);

    await createReportVersion(world.database.db, queue, analystActor(), reportId, {}, {});
    const detail = (await analyst.get(`/api/reports/${reportId}`).expect(200)).body;
    const byNumber = Object.fromEntries(
      detail.versions.map((version: { versionNumber: number; templateVersionNumber: number }) => [
        version.versionNumber,
        version.templateVersionNumber,
      ]),
    );
    expect(byNumber).toEqual({ 1: 1, 2: 2 });

    // The templates page says exactly that.
    const page = await admin.get('/admin/templates').expect(200);
    expect(page.text).toContain(
      'Each rendered report version keeps the template version it was printed with',
    );
    expect(page.text).toContain(
      'rendering a report again makes a new version with the template published at that moment',
    );
    expect(page.text).not.toContain('a report keeps the template version it was created with');
  });
});
