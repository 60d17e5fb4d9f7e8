import { createHash } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDefaultTemplate } from '../../server/features/reports/render/template-default.ts';
import {
  createTemplateVersion,
  publishTemplateVersion,
  templateSourceSha256,
  templateVersionForNewReports,
} from '../../server/features/reports/report-templates.ts';
import {
  auditEvents,
  reportTemplates,
  reportTemplateVersions,
} from '../../server/platform/db/schema/index.ts';
import { HttpError } from '../../server/platform/http/http-error.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

/** Template storage: the shipped default on first use, immutable numbered versions, publishing. */

let world: TestWorld;
let other: TestWorld;

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'] });
  other = await createTestWorld({ admin: ['admin'] });
});
afterAll(async () => {
  await world?.close();
  await other?.close();
});

async function refusal(statement: Promise<unknown>): Promise<string> {
  try {
    await statement;
  } catch (error) {
    return (error as { cause?: { message?: string } }).cause?.message ?? (error as Error).message;
  }
  return 'the statement was accepted';
}

const actor = () => ({ userId: world.users.admin!.id, label: world.users.admin!.email });

describe('report templates', () => {
  it('an organisation gets the shipped default as version 1, published, once, even on concurrent first use', async () => {
    const db = world.database.db;
    const [one, two] = await Promise.all([
      db.transaction((tx) => templateVersionForNewReports(tx, world.organisationId)),
      db.transaction((tx) => templateVersionForNewReports(tx, world.organisationId)),
    ]);
    expect(one!.id).toBe(two!.id);
    expect(one!.versionNumber).toBe(1);
    const shipped = loadDefaultTemplate();
    expect(one!.mainSource).toBe(shipped.body);
    expect(one!.partials).toEqual(shipped.partials);
    expect(one!.stylesheet).toBe(shipped.stylesheet);
    const templates = await db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.organisationId, world.organisationId));
    expect(templates).toHaveLength(1);
    expect(templates[0]!.publishedVersionId).toBe(one!.id);
    const events = await db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.action, 'report-template.published'),
        ),
      );
    expect(events).toHaveLength(1);
    expect(events[0]!.actorUserId).toBeNull();
    expect(events[0]!.beforeValue).toEqual({ publishedVersionId: null });
  });

  it('the hash is SHA-256 of the canonical text and does not depend on the order of the partials', () => {
    const source = { body: '<p>{{report.number}}</p>', partials: { b: 'B', a: 'A' }, stylesheet: 'p{}' };
    const reordered = { ...source, partials: { a: 'A', b: 'B' } };
    // Independent computation with node:crypto (FIPS 180-4) over the documented canonical form.
    const expected = createHash('sha256')
      .update(
        JSON.stringify({
          body: source.body,
          stylesheet: 'p{}',
          partials: [
            ['a', 'A'],
            ['b', 'B'],
          ],
        }),
      )
      .digest('hex');
    expect(templateSourceSha256(source)).toBe(expected);
    expect(templateSourceSha256(reordered)).toBe(expected);
    expect(templateSourceSha256({ ...source, stylesheet: 'p{ }' })).not.toBe(expected);
  });

  it('new versions are numbered after the last; publishing moves the pointer with an audit event', async () => {
    const db = world.database.db;
    const [template] = await db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.organisationId, world.organisationId));
    const source = { ...loadDefaultTemplate(), stylesheet: 'body { color: black; }' };
    const second = await createTemplateVersion(db, {
      organisationId: world.organisationId,
      templateId: template!.id,
      source,
      note: 'black text',
      actor: actor(),
    });
    expect(second.versionNumber).toBe(2);
    expect(second.sha256).toBe(templateSourceSha256(source));
    await publishTemplateVersion(db, {
      organisationId: world.organisationId,
      templateId: template!.id,
      versionId: second.id,
      actor: actor(),
    });
    const used = await db.transaction((tx) => templateVersionForNewReports(tx, world.organisationId));
    expect(used.id).toBe(second.id);
    const [event] = await db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.action, 'report-template.published'),
          eq(auditEvents.actorUserId, world.users.admin!.id),
        ),
      );
    expect(event!.beforeValue).toEqual({ publishedVersionId: template!.publishedVersionId });
    expect(event!.afterValue).toMatchObject({
      publishedVersionId: second.id,
      versionNumber: 2,
      sha256: second.sha256,
    });
  });

  it('a template that does not compile is refused with every problem located, and nothing is stored', async () => {
    const db = world.database.db;
    const [template] = await db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.organisationId, world.organisationId));
    const before = await db
      .select()
      .from(reportTemplateVersions)
      .where(eq(reportTemplateVersions.templateId, template!.id));
    const attempt = createTemplateVersion(db, {
      organisationId: world.organisationId,
      templateId: template!.id,
      source: { body: '<p>{{{study.product}}}</p>\n<p>{{#if x}}</p>', partials: {}, stylesheet: '' },
      note: 'broken',
      actor: actor(),
    });
    const error = await attempt.catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(HttpError);
    expect((error as HttpError).status).toBe(422);
    expect((error as HttpError).details).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ field: 'body', message: expect.stringMatching(/^line \d+, column \d+: /) }),
      ]),
    );
    const after = await db
      .select()
      .from(reportTemplateVersions)
      .where(eq(reportTemplateVersions.templateId, template!.id));
    expect(after).toHaveLength(before.length);
  });

  it('versions cannot be changed or removed, templates cannot be removed, and another organisation cannot publish', async () => {
    const db = world.database.db;
    const [template] = await db
      .select()
      .from(reportTemplates)
      .where(eq(reportTemplates.organisationId, world.organisationId));
    expect(
      await refusal(
        db.execute(sql`update report_template_versions set note = 'x' where template_id = ${template!.id}`),
      ),
    ).toMatch(/write-once/);
    expect(
      await refusal(
        db.execute(sql`delete from report_template_versions where template_id = ${template!.id}`),
      ),
    ).toMatch(/write-once/);
    expect(await refusal(db.execute(sql`delete from report_templates where id = ${template!.id}`))).toMatch(
      /never deleted/,
    );
    const foreign = publishTemplateVersion(other.database.db, {
      organisationId: other.organisationId,
      templateId: template!.id,
      versionId: template!.publishedVersionId!,
      actor: { userId: other.users.admin!.id, label: 'outsider' },
    });
    await expect(foreign).rejects.toMatchObject({ status: 404 });
  });
});
