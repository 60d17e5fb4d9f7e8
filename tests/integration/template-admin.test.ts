import { createHash } from 'node:crypto';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PRODUCT } from '../../server/demo/demo-study.ts';
import { openRenderQueue, type RenderQueue } from '../../server/features/reports/queue/render-queue.ts';
import { createReport } from '../../server/features/reports/reports.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { parseRenderConfig } from '../../server/platform/config/render-config.ts';
import {
  auditEvents,
  reportTemplates,
  reportTemplateVersions,
  reportVersions,
} from '../../server/platform/db/schema/index.ts';
import type { TemplateSourceInput } from '../../shared/api/templates.ts';
import { routeInventory } from '../support/route-inventory.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The report template editor's server side on the real database: save and publish a version, the
 * reports made before and after, refusals with the line named, the preview's HTML, the diff,
 * rollback and its audit event, and the admin-only policy on every route.
 */

type Agent = Awaited<ReturnType<typeof signIn>>['agent'];

let world: TestWorld;
let other: TestWorld;
let queue: RenderQueue;
let runId: number;
let admin: Agent;
let adminToken: string;
let templateId: number;
let firstVersionId: number;
let secondVersionId: number;
let earlierReportId: number;

const NEW_LETTERHEAD = 'Northfield QC Laboratory · Stability Unit';

function analystActor(): SessionUser {
  const user = world.users.analyst!;
  return {
    id: user.id,
    email: user.email,
    fullName: 'Test analyst',
    organisationId: world.organisationId,
    organisationName: 'test',
    roles: ['analyst'],
  };
}

const newReport = async () =>
  (await createReport(world.database.db, queue, analystActor(), runId, { title: 'Template check' }, {}))
    .reportId;

async function templateVersionOf(reportId: number): Promise<number> {
  const [row] = await world.database.db
    .select({ templateVersionId: reportVersions.templateVersionId })
    .from(reportVersions)
    .where(eq(reportVersions.reportId, reportId));
  return row!.templateVersionId;
}

async function signedInWithToken(name: string): Promise<{ agent: Agent; token: string }> {
  const user = world.users[name]!;
  const { agent } = await signIn(world.app, user.email, user.password);
  return { agent, token: csrfFrom((await agent.get('/').expect(200)).text) };
}

async function sourceOf(versionId: number): Promise<TemplateSourceInput> {
  const response = await admin.get(`/api/admin/templates/${templateId}/versions/${versionId}`).expect(200);
  return response.body.source as TemplateSourceInput;
}

async function auditOf(action: string) {
  return world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.organisationId, world.organisationId), eq(auditEvents.action, action)))
    .orderBy(auditEvents.id);
}

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], analyst: ['analyst'], reviewer: ['reviewer'] });
  other = await createTestWorld({ admin: ['admin'] });
  const sender = openRenderQueue({
    config: parseRenderConfig(),
    pool: world.database.pool,
    supervise: false,
  });
  // Reports are created for their template version only; nothing renders in this file.
  queue = { ...sender, enqueue: async () => 'not-sent' };
  ({ runId } = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!));
  earlierReportId = await newReport();
  ({ agent: admin, token: adminToken } = await signedInWithToken('admin'));
}, 120_000);
afterAll(async () => {
  await world?.close();
  await other?.close();
});

describe('template list and editor state', () => {
  it('lists the shipped default as version 1, published, with its creator, time and hash', async () => {
    const page = await admin.get('/admin/templates').expect(200);
    expect(page.text).toContain('Rateledger standard report');
    expect(page.text).toContain('Published');
    const { body } = await admin.get('/api/admin/templates').expect(200);
    expect(body.templates).toHaveLength(1);
    const template = body.templates[0];
    templateId = template.id;
    firstVersionId = template.publishedVersionId;
    expect(template.versions).toHaveLength(1);
    expect(template.versions[0]).toMatchObject({ versionNumber: 1, published: true });
    expect(template.versions[0].sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(page.text).toContain(template.versions[0].sha256.slice(0, 12));
    // The report made before any edit uses that version.
    expect(await templateVersionOf(earlierReportId)).toBe(firstVersionId);
  });

  it('opens the editor with sample analyses, every variable and every helper', async () => {
    const { body } = await admin.get(`/api/admin/templates/${templateId}`).expect(200);
    expect(body.sampleRuns.map((run: { id: number }) => run.id)).toContain(runId);
    expect(body.variables.find((v: { path: string }) => v.path === 'study.product')).toMatchObject({
      insert: '{{study.product}}',
    });
    expect(body.helpers.map((helper: { name: string }) => helper.name)).toEqual(
      expect.arrayContaining(['sig', 'interval', 'isoDate', 'table', 'figure']),
    );
    const page = await admin.get(`/admin/templates/${templateId}/edit`).expect(200);
    expect(page.text).toContain('data-island="template-editor"');
    expect(page.headers['content-security-policy']).toContain("script-src 'self'");
  });
});

describe('saving and publishing', () => {
  it('saves a new version and publishes it; a later report uses it, the earlier keeps its own', async () => {
    const source = await sourceOf(firstVersionId);
    source.partials.letterhead = source.partials.letterhead!.replace(
      '<span class="letterhead-name">{{organisation.name}}</span>',
      `<span class="letterhead-name">${NEW_LETTERHEAD}</span>\n  <span class="letterhead-study">{{study.title}}</span>`,
    );
    const saved = await admin
      .post(`/api/admin/templates/${templateId}/versions`)
      .set('x-csrf-token', adminToken)
      .send({ source, note: 'Letterhead names the unit and the study' })
      .expect(201);
    secondVersionId = saved.body.version.id;
    expect(saved.body.version).toMatchObject({ versionNumber: 2, published: false });
    // SHA-256 (FIPS 180-4, node:crypto) of the documented canonical form: body, stylesheet, sorted partials.
    const canonical = JSON.stringify({
      body: source.body,
      stylesheet: source.stylesheet,
      partials: Object.entries(source.partials).sort(([a], [b]) => (a < b ? -1 : 1)),
    });
    expect(saved.body.version.sha256).toBe(createHash('sha256').update(canonical).digest('hex'));

    // Change control (issue 13 §6): without a reason or without the confirmation nothing is published.
    for (const [incomplete, field] of [
      [{ versionId: secondVersionId, confirmed: true }, 'reason'],
      [{ versionId: secondVersionId, reason: '   ', confirmed: true }, 'reason'],
      [{ versionId: secondVersionId, reason: 'Heading shows the number' }, 'confirmed'],
    ] as const) {
      const refused = await admin
        .post(`/api/admin/templates/${templateId}/publish`)
        .set('x-csrf-token', adminToken)
        .send(incomplete)
        .expect(400);
      expect(refused.body.error.details.map((detail: { field: string }) => detail.field)).toEqual([field]);
    }
    expect(
      (await auditOf('report-template.published')).filter(
        (event) => event.actorUserId === world.users.admin!.id,
      ),
    ).toEqual([]);
    const published = await admin
      .post(`/api/admin/templates/${templateId}/publish`)
      .set('x-csrf-token', adminToken)
      .send({
        versionId: secondVersionId,
        reason: 'Heading shows the report number (CR-12)',
        confirmed: true,
      })
      .expect(200);
    expect(published.body).toEqual({
      status: 'published',
      publishedVersionId: secondVersionId,
      publishedVersionNumber: 2,
      previousVersionNumber: 1,
      rolledBack: false,
    });

    const laterReportId = await newReport();
    expect(await templateVersionOf(laterReportId)).toBe(secondVersionId);
    expect(await templateVersionOf(earlierReportId)).toBe(firstVersionId);

    const [created] = (await auditOf('report-template.version-created')).filter(
      (event) => event.actorUserId === world.users.admin!.id,
    );
    expect(created!.afterValue).toMatchObject({
      templateId,
      versionNumber: 2,
      sha256: saved.body.version.sha256,
    });
    const publishedEvents = (await auditOf('report-template.published')).filter(
      (event) => event.actorUserId === world.users.admin!.id,
    );
    expect(publishedEvents).toHaveLength(1);
    expect(publishedEvents[0]!.recordId).toBe(String(templateId));
    expect(publishedEvents[0]!.beforeValue).toEqual({ publishedVersionId: firstVersionId });
    expect(publishedEvents[0]!.afterValue).toMatchObject({
      versionNumber: 2,
      sha256: saved.body.version.sha256,
      reason: 'Heading shows the report number (CR-12)',
    });
  });

  it('refuses to save a template with a syntax error, naming the part and the line; nothing is stored', async () => {
    const source = await sourceOf(secondVersionId);
    source.partials.letterhead = `<header>\n  <p>ok</p>\n  {{#if organisation.name}}<span>{{organisation.name}}</span>\n</header>`;
    const refused = await admin
      .post(`/api/admin/templates/${templateId}/versions`)
      .set('x-csrf-token', adminToken)
      .send({ source, note: 'broken' })
      .expect(422);
    expect(refused.body.error.message).toMatch(/partial "letterhead", line \d+/);
    const problem = refused.body.error.details[0];
    expect(problem.part).toBe('partial "letterhead"');
    // The unclosed {{#if}} opens on line 3; Handlebars reports where the file ends without its {{/if}}.
    expect(problem.line).toBeGreaterThanOrEqual(3);
    const versions = await world.database.db
      .select()
      .from(reportTemplateVersions)
      .where(eq(reportTemplateVersions.templateId, templateId));
    expect(versions).toHaveLength(2);
  });

  it('refuses a misspelt variable, which only filling in finds, with its line and column', async () => {
    const source = await sourceOf(secondVersionId);
    source.partials.letterhead = '<header>\n  <p>Lab</p>\n  <p>{{study.prodcut}}</p>\n</header>';
    const refused = await admin
      .post(`/api/admin/templates/${templateId}/versions`)
      .set('x-csrf-token', adminToken)
      .send({ source, note: 'typo' })
      .expect(422);
    // Line 3; column 8 is where the misspelt name starts, after `  <p>{{`.
    expect(refused.body.error.details[0]).toMatchObject({ part: 'partial "letterhead"', line: 3, column: 8 });
    expect(refused.body.error.details[0].message).toContain('Unknown variable "prodcut"');
  });

  it('a stored version whose text does not compile cannot be published, and the error names the line', async () => {
    const good = await sourceOf(secondVersionId);
    const body = good.body.replace('<body>', '<body>\n{{#each summary.series}}<p>{{id}}</p>');
    // Stored as the database would hold a version written before today's checks (the service refuses it).
    const [broken] = await world.database.db
      .insert(reportTemplateVersions)
      .values({
        templateId,
        versionNumber: 3,
        mainSource: body,
        partials: good.partials,
        stylesheet: good.stylesheet,
        sha256: 'f'.repeat(64),
        note: 'written directly for the test',
      })
      .returning();
    const refused = await admin
      .post(`/api/admin/templates/${templateId}/publish`)
      .set('x-csrf-token', adminToken)
      .send({ versionId: broken!.id, reason: 'Try the broken one', confirmed: true })
      .expect(422);
    expect(refused.body.error.message).toMatch(
      /^Version 3 cannot be published: .*body, line \d+, column \d+/,
    );
    expect(refused.body.error.details[0]).toMatchObject({ part: 'body' });
    expect(refused.body.error.details[0].line).toEqual(expect.any(Number));
    const [template] = await world.database.db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.id, templateId));
    expect(template!.publishedVersionId).toBe(secondVersionId);
  });
});

describe('preview', () => {
  it('fills the draft in with the chosen analysis and returns HTML without any script', async () => {
    const source = await sourceOf(secondVersionId);
    source.partials.caution = [
      '<aside class="caution"><p>{{caution}}</p>',
      '<script>document.title = "ran"</script><SCRIPT src="https://example.invalid/x.js"></SCRIPT>',
      '<img src="https://example.invalid/pixel.png" onerror="alert(1)">',
      '<a href="javascript:alert(1)" onclick="alert(2)">link</a><iframe srcdoc="<script>alert(3)</script>"></iframe>',
      '<svg><a xlink:href="javascript:alert(4)"><text>t</text></a><set attributeName="href" to="javascript:alert(5)"/></svg>',
      '<!--><script>alert(6)</script>--></aside>',
    ].join('\n');
    const { body } = await admin
      .post('/api/admin/templates/preview')
      .set('x-csrf-token', adminToken)
      .send({ source, sampleRunId: runId })
      .expect(200);
    expect(body.problems).toEqual([]);
    expect(body.sample).toContain(`Analysis run ${runId}`);
    expect(body.html).toContain(NEW_LETTERHEAD);
    expect(body.html).toContain('<svg'); // the run's figures, drawn on the server
    expect(body.html).not.toMatch(/<script/i);
    expect(body.html).not.toMatch(/\son[a-z]+\s*=/i);
    expect(body.html).not.toMatch(/javascript:/i);
    expect(body.html).not.toMatch(/<iframe|srcdoc|example\.invalid/i);
    expect(body.examples['study.product']).toBe(DEMO_PRODUCT);
  });

  it('returns the problems with line and column instead of HTML when the draft does not compile', async () => {
    const source = await sourceOf(secondVersionId);
    source.body = `${source.body.split('\n').slice(0, 4).join('\n')}\n{{{study.product}}}\n</html>`;
    const { body } = await admin
      .post('/api/admin/templates/preview')
      .set('x-csrf-token', adminToken)
      .send({ source, sampleRunId: runId })
      .expect(200);
    expect(body.html).toBeNull();
    expect(body.problems[0]).toMatchObject({ part: 'body', line: 5, column: 1 });
  });

  it('uses the invented sample when no analysis is chosen', async () => {
    const source = await sourceOf(secondVersionId);
    const { body } = await admin
      .post('/api/admin/templates/preview')
      .set('x-csrf-token', adminToken)
      .send({ source, sampleRunId: null })
      .expect(200);
    expect(body.sample).toMatch(/Invented sample analysis: Veltrazine/);
    expect(body.html).toContain('Veltrazine 50 mg tablets');
  });
});

describe('compare and roll back', () => {
  it('the diff shows the changed lines of the changed part only', async () => {
    const { body } = await admin
      .get(`/api/admin/templates/${templateId}/diff?from=${firstVersionId}&to=${secondVersionId}`)
      .expect(200);
    expect(body.from.versionNumber).toBe(1);
    expect(body.to.versionNumber).toBe(2);
    const changed = body.parts.filter((part: { status: string }) => part.status !== 'unchanged');
    expect(changed.map((part: { part: string }) => part.part)).toEqual(['partial "letterhead"']);
    const lines = changed[0].hunks.flatMap((hunk: { lines: unknown[] }) => hunk.lines);
    expect(lines).toContainEqual(
      expect.objectContaining({
        kind: 'removed',
        text: '  <span class="letterhead-name">{{organisation.name}}</span>',
        oldNumber: 3,
      }),
    );
    expect(lines).toContainEqual(
      expect.objectContaining({
        kind: 'added',
        text: `  <span class="letterhead-name">${NEW_LETTERHEAD}</span>`,
      }),
    );
    expect(lines).toContainEqual(
      expect.objectContaining({
        kind: 'added',
        text: '  <span class="letterhead-study">{{study.title}}</span>',
      }),
    );
    expect(changed[0]).toMatchObject({ added: 2, removed: 1 });
  });

  it('rolling back publishes the earlier version, is audited with both versions, and new reports use it', async () => {
    const { body } = await admin
      .post(`/api/admin/templates/${templateId}/publish`)
      .set('x-csrf-token', adminToken)
      .send({ versionId: firstVersionId, reason: 'Version 2 misprints the batch table', confirmed: true })
      .expect(200);
    expect(body).toMatchObject({ publishedVersionNumber: 1, previousVersionNumber: 2, rolledBack: true });
    const [event] = await auditOf('report-template.rolled-back');
    const versions = await world.database.db
      .select()
      .from(reportTemplateVersions)
      .where(inArray(reportTemplateVersions.id, [firstVersionId, secondVersionId]));
    const sha = (id: number) => versions.find((version) => version.id === id)!.sha256;
    expect(event!.actorUserId).toBe(world.users.admin!.id);
    expect(event!.recordId).toBe(String(templateId));
    expect(event!.beforeValue).toEqual({
      versionId: secondVersionId,
      versionNumber: 2,
      sha256: sha(secondVersionId),
    });
    expect(event!.afterValue).toEqual({
      versionId: firstVersionId,
      versionNumber: 1,
      sha256: sha(firstVersionId),
      reason: 'Version 2 misprints the batch table',
    });
    expect(await templateVersionOf(await newReport())).toBe(firstVersionId);
  });
});

describe('who may use the editor', () => {
  it('analysts and reviewers get 403 on every template admin route, page and API', async () => {
    const routes = routeInventory(world.app).filter((route) => route.path.includes('/admin/templates'));
    expect(routes.length).toBeGreaterThanOrEqual(9);
    for (const route of routes) expect(route.policy).toEqual({ kind: 'roles', roles: ['admin'] });
    for (const name of ['analyst', 'reviewer']) {
      const { agent, token } = await signedInWithToken(name);
      for (const route of routes) {
        const url = route.path
          .replace(':versionId', String(firstVersionId))
          .replace(':id', String(templateId))
          .concat(route.path.endsWith('/diff') ? `?from=${firstVersionId}&to=${secondVersionId}` : '');
        for (const method of route.methods) {
          const call =
            method === 'post' ? agent.post(url).set('x-csrf-token', token).send({}) : agent.get(url);
          const response = await call;
          expect({ name, method, url, status: response.status }).toEqual({ name, method, url, status: 403 });
          if (url.startsWith('/api/')) expect(response.body.error.message).toBe('This needs the admin role.');
        }
      }
    }
  });

  it("another organisation's admin cannot see or change this template", async () => {
    const stranger = other.users.admin!;
    const { agent } = await signIn(other.app, stranger.email, stranger.password);
    const token = csrfFrom((await agent.get('/').expect(200)).text);
    await agent.get(`/api/admin/templates/${templateId}`).expect(404);
    await agent.get(`/admin/templates/${templateId}/edit`).expect(404);
    await agent
      .post(`/api/admin/templates/${templateId}/publish`)
      .set('x-csrf-token', token)
      .send({ versionId: secondVersionId, reason: 'Outsider', confirmed: true })
      .expect(404);
  });
});
