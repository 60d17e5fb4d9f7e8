import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, reportTemplates } from '../../server/platform/db/schema/index.ts';
import type { TemplateSourceInput } from '../../shared/api/templates.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 13 §6: an organisation setting can require a second admin to approve a template
 * publication or roll back. With it on, publishing proposes; the proposer cannot approve their
 * own proposal; another admin approves (then the version is published) or refuses, with a
 * reason; every step is an audit event. With it off, publishing takes effect at once.
 */

type Agent = Awaited<ReturnType<typeof signIn>>['agent'];

let world: TestWorld;
let other: TestWorld;
let first: { agent: Agent; token: string };
let second: { agent: Agent; token: string };
let stranger: { agent: Agent; token: string };
let templateId: number;
const versionIds: Record<number, number> = {};

async function signedInWithToken(target: TestWorld, name: string) {
  const user = target.users[name]!;
  const { agent } = await signIn(target.app, user.email, user.password);
  return { agent, token: csrfFrom((await agent.get('/').redirects(3).expect(200)).text) };
}

async function publishedVersionId(): Promise<number | null> {
  const [row] = await world.database.db
    .select({ id: reportTemplates.publishedVersionId })
    .from(reportTemplates)
    .where(eq(reportTemplates.id, templateId));
  return row!.id;
}

async function actionsSince(afterId: number): Promise<string[]> {
  const rows = await world.database.db
    .select({ id: auditEvents.id, action: auditEvents.action })
    .from(auditEvents)
    .where(eq(auditEvents.organisationId, world.organisationId))
    .orderBy(auditEvents.id);
  return rows.filter((row) => row.id > afterId).map((row) => row.action);
}

async function lastAuditId(): Promise<number> {
  const rows = await world.database.db
    .select({ id: auditEvents.id })
    .from(auditEvents)
    .where(eq(auditEvents.organisationId, world.organisationId));
  return Math.max(0, ...rows.map((row) => row.id));
}

async function saveVersion(number: number) {
  const source = (
    await first.agent.get(`/api/admin/templates/${templateId}/versions/${versionIds[1]}`).expect(200)
  ).body.source as TemplateSourceInput;
  const edited = { ...source, body: `${source.body}\n<!-- edit ${number} -->` };
  const saved = await first.agent
    .post(`/api/admin/templates/${templateId}/versions`)
    .set('x-csrf-token', first.token)
    .send({ source: edited, note: `Edit ${number}` })
    .expect(201);
  expect(saved.body.version.versionNumber).toBe(number);
  versionIds[number] = saved.body.version.id;
}

const publish = (who: { agent: Agent; token: string }, versionNumber: number, reason = 'Letterhead update') =>
  who.agent
    .post(`/api/admin/templates/${templateId}/publish`)
    .set('x-csrf-token', who.token)
    .send({ versionId: versionIds[versionNumber], reason, confirmed: true });

const decide = (
  who: { agent: Agent; token: string },
  requestId: number,
  body: Record<string, unknown>,
  target = templateId,
) =>
  who.agent
    .post(`/api/admin/templates/${target}/publications/${requestId}/decision`)
    .set('x-csrf-token', who.token)
    .send(body);

async function setSecondAdminRule(on: boolean) {
  const page = await first.agent.get('/admin/settings').expect(200);
  const form: Record<string, string> = { _csrf: csrfFrom(page.text) };
  if (on) form.templatePublicationNeedsSecondAdmin = 'on';
  await first.agent.post('/admin/settings/change-control').type('form').send(form).expect(303);
}

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], deputy: ['admin'], analyst: ['analyst'] });
  other = await createTestWorld({ admin: ['admin'] });
  first = await signedInWithToken(world, 'admin');
  second = await signedInWithToken(world, 'deputy');
  stranger = await signedInWithToken(other, 'admin');
  const { body } = await first.agent.get('/api/admin/templates').expect(200);
  templateId = body.templates[0].id;
  versionIds[1] = body.templates[0].publishedVersionId;
  await saveVersion(2);
  await saveVersion(3);
}, 120_000);
afterAll(async () => {
  await world?.close();
  await other?.close();
});

describe('second-admin approval of template publications', () => {
  it('with the setting off (the default), publishing takes effect at once, as before', async () => {
    const settings = await first.agent.get('/admin/settings').expect(200);
    expect(settings.text).toContain('A second admin approves each template publication or roll back');
    expect(settings.text).not.toMatch(/name="templatePublicationNeedsSecondAdmin"[^>]*checked/);
    const templates = await first.agent.get('/admin/templates').expect(200);
    expect(templates.text).toContain('data-change-control="immediate"');
    const response = await publish(first, 2).expect(200);
    expect(response.body).toMatchObject({ status: 'published', publishedVersionNumber: 2 });
    expect(await publishedVersionId()).toBe(versionIds[2]);
  });

  it('turning the setting on is an audited settings change', async () => {
    const before = await lastAuditId();
    await setSecondAdminRule(true);
    expect(await actionsSince(before)).toEqual(['template-change-control.changed']);
    const settings = await first.agent.get('/admin/settings').expect(200);
    expect(settings.text).toMatch(/name="templatePublicationNeedsSecondAdmin"[^>]*checked/);
    const templates = await first.agent.get('/admin/templates').expect(200);
    expect(templates.text).toContain('data-change-control="second-admin"');
  });

  let requestId: number;
  it('with the setting on, publishing only proposes: nothing new reports use changes', async () => {
    const before = await lastAuditId();
    const response = await publish(first, 3, 'New stability unit name').expect(200);
    expect(response.body).toMatchObject({
      status: 'pending',
      pending: {
        versionNumber: 3,
        previousVersionNumber: 2,
        rollback: false,
        reason: 'New stability unit name',
      },
    });
    requestId = response.body.pending.id;
    expect(await publishedVersionId()).toBe(versionIds[2]);
    expect(await actionsSince(before)).toEqual(['report-template.publication-proposed']);
    const mine = await first.agent.get(`/api/admin/templates/${templateId}/publications`).expect(200);
    expect(mine.body.needsSecondAdmin).toBe(true);
    expect(mine.body.pending).toEqual([expect.objectContaining({ id: requestId, mayDecide: false })]);
    const theirs = await second.agent.get(`/api/admin/templates/${templateId}/publications`).expect(200);
    expect(theirs.body.pending).toEqual([
      expect.objectContaining({ id: requestId, mayDecide: true, proposedBy: 'Test admin' }),
    ]);
  });

  it('the admin who proposed it cannot approve it', async () => {
    const before = await lastAuditId();
    const response = await decide(first, requestId, {
      decision: 'approve',
      reason: 'Looks right to me',
      confirmed: true,
    }).expect(403);
    expect(response.body.error.message).toMatch(/another admin/);
    expect(await publishedVersionId()).toBe(versionIds[2]);
    expect(await actionsSince(before)).toEqual([]);
  });

  it('a decision needs a reason and a confirmation; another organisation sees no proposal', async () => {
    await decide(second, requestId, { decision: 'approve', reason: ' ', confirmed: true }).expect(400);
    await decide(second, requestId, { decision: 'approve', reason: 'Checked' }).expect(400);
    await decide(stranger, requestId, { decision: 'approve', reason: 'x', confirmed: true }).expect(404);
    const theirTemplates = (await stranger.agent.get('/api/admin/templates').expect(200)).body.templates;
    await decide(
      stranger,
      requestId,
      { decision: 'approve', reason: 'x', confirmed: true },
      theirTemplates[0].id,
    ).expect(404);
    expect(await publishedVersionId()).toBe(versionIds[2]);
  });

  it('a second admin approves: only then is the version published, with both events audited', async () => {
    const before = await lastAuditId();
    const response = await decide(second, requestId, {
      decision: 'approve',
      reason: 'Compared v2 and v3; only the letterhead changed',
      confirmed: true,
    }).expect(200);
    expect(response.body).toMatchObject({
      decision: 'approved',
      published: { publishedVersionNumber: 3, previousVersionNumber: 2, rolledBack: false },
    });
    expect(await publishedVersionId()).toBe(versionIds[3]);
    expect(await actionsSince(before)).toEqual([
      'report-template.publication-approved',
      'report-template.published',
    ]);
    const [approval] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.action, 'report-template.publication-approved'),
        ),
      );
    expect(approval!.actorUserId).toBe(world.users.deputy!.id);
    expect(approval!.beforeValue).toMatchObject({
      proposedBy: world.users.admin!.id,
      proposalReason: 'New stability unit name',
    });
    expect(approval!.afterValue).toMatchObject({
      decision: 'approved',
      reason: 'Compared v2 and v3; only the letterhead changed',
    });
    // Decided once: a second decision is refused and nothing is pending any more.
    await decide(second, requestId, { decision: 'refuse', reason: 'Too late', confirmed: true }).expect(409);
    const pending = await second.agent.get(`/api/admin/templates/${templateId}/publications`).expect(200);
    expect(pending.body.pending).toEqual([]);
  });

  it('a roll back works the same way, and a refusal publishes nothing', async () => {
    const proposed = await publish(second, 1, 'Back to the shipped default for the audit').expect(200);
    expect(proposed.body).toMatchObject({ status: 'pending', pending: { versionNumber: 1, rollback: true } });
    await decide(second, proposed.body.pending.id, {
      decision: 'approve',
      reason: 'mine',
      confirmed: true,
    }).expect(403);
    const before = await lastAuditId();
    const refused = await decide(first, proposed.body.pending.id, {
      decision: 'refuse',
      reason: 'The default lacks our letterhead',
      confirmed: true,
    }).expect(200);
    expect(refused.body).toEqual({ decision: 'refused', published: null });
    expect(await publishedVersionId()).toBe(versionIds[3]);
    expect(await actionsSince(before)).toEqual(['report-template.publication-refused']);

    const again = await publish(second, 1, 'Back to the default after all').expect(200);
    const approved = await decide(first, again.body.pending.id, {
      decision: 'approve',
      reason: 'Agreed in the change meeting',
      confirmed: true,
    }).expect(200);
    expect(approved.body.published).toMatchObject({ publishedVersionNumber: 1, rolledBack: true });
    expect(await publishedVersionId()).toBe(versionIds[1]);
  });

  it('the proposal and decision rows are write-once in the database', async () => {
    await expect(
      world.database.pool.query(
        'update template_publication_decisions set reason = $1 where decided_by = $2',
        ['changed', world.users.deputy!.id],
      ),
    ).rejects.toThrow();
    await expect(
      world.database.pool.query('delete from template_publication_requests where organisation_id = $1', [
        world.organisationId,
      ]),
    ).rejects.toThrow();
  });

  it('an analyst cannot see or decide proposals', async () => {
    const analyst = await signedInWithToken(world, 'analyst');
    await analyst.agent.get(`/api/admin/templates/${templateId}/publications`).expect(403);
    await decide(analyst, 1, { decision: 'approve', reason: 'x', confirmed: true }).expect(403);
  });

  it('with the setting turned off again, publishing is immediate', async () => {
    await setSecondAdminRule(false);
    const response = await publish(first, 3, 'Our letterhead again').expect(200);
    expect(response.body).toMatchObject({ status: 'published', publishedVersionNumber: 3 });
    expect(await publishedVersionId()).toBe(versionIds[3]);
  });
});
