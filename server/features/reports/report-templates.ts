import { createHash } from 'node:crypto';
import { and, desc, eq, isNotNull, max, sql } from 'drizzle-orm';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import { reportTemplates, reportTemplateVersions } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { DEFAULT_TEMPLATE_DIR, loadDefaultTemplate } from './render/template-default.ts';
import { checkReportTemplate, type ReportTemplateSource } from './render/template-engine.ts';

/**
 * Report templates of an organisation: immutable numbered versions, and a published pointer per
 * template. New reports use the template published most recently (an organisation has one today;
 * the admin editor of a later issue adds more). The first time an organisation needs a template it
 * gets the default shipped in `templates/default/` as version 1, published — with audit events,
 * attributed to the system.
 *
 * A version's SHA-256 is taken over the canonical JSON of body, stylesheet and the partials sorted
 * by name, so the same text always gives the same hash whatever order the partials came in.
 */

export const DEFAULT_TEMPLATE_NAME = 'Rateledger standard report';
const TEMPLATE_LOCK = 7_305_020;
const SYSTEM_ACTOR = 'system (default report template)';

export type TemplateVersion = typeof reportTemplateVersions.$inferSelect;

export interface TemplateActor {
  userId: number | null;
  label: string;
}

export function templateSourceSha256(source: ReportTemplateSource): string {
  const partials = Object.entries(source.partials).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return createHash('sha256')
    .update(JSON.stringify({ body: source.body, stylesheet: source.stylesheet, partials }))
    .digest('hex');
}

export function versionSource(version: TemplateVersion): ReportTemplateSource {
  return { body: version.mainSource, partials: version.partials, stylesheet: version.stylesheet };
}

/**
 * Stores a new version of a template (numbered after the last), after checking it compiles.
 * Throws HttpError 404 (no such template in the organisation) or 422 with every problem located.
 */
export async function createTemplateVersion(
  db: Executor,
  input: {
    organisationId: number;
    templateId: number;
    source: ReportTemplateSource;
    note: string;
    actor: TemplateActor;
  },
): Promise<TemplateVersion> {
  const problems = checkReportTemplate(input.source);
  if (problems.length > 0) {
    throw new HttpError(
      422,
      `The template has ${problems.length} problem${problems.length === 1 ? '' : 's'}; nothing was stored.`,
      problems.map((problem) => ({
        field: problem.part,
        message:
          problem.line === null
            ? problem.message
            : `line ${problem.line}, column ${problem.column}: ${problem.message}`,
      })),
    );
  }
  return transaction(db, async (tx) => {
    const [template] = await tx
      .select()
      .from(reportTemplates)
      .where(
        and(
          eq(reportTemplates.id, input.templateId),
          eq(reportTemplates.organisationId, input.organisationId),
        ),
      )
      .for('update');
    if (!template)
      throw new HttpError(404, `There is no report template ${input.templateId} in your organisation.`);
    const [last] = await tx
      .select({ number: max(reportTemplateVersions.versionNumber) })
      .from(reportTemplateVersions)
      .where(eq(reportTemplateVersions.templateId, template.id));
    const [version] = await tx
      .insert(reportTemplateVersions)
      .values({
        templateId: template.id,
        versionNumber: (last?.number ?? 0) + 1,
        mainSource: input.source.body,
        partials: input.source.partials,
        stylesheet: input.source.stylesheet,
        sha256: templateSourceSha256(input.source),
        note: input.note,
        createdBy: input.actor.userId,
      })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: input.organisationId,
      actorUserId: input.actor.userId,
      actorLabel: input.actor.label,
      action: 'report-template.version-created',
      recordType: 'report_template_version',
      recordId: version!.id,
      after: {
        templateId: template.id,
        name: template.name,
        versionNumber: version!.versionNumber,
        sha256: version!.sha256,
        note: input.note,
      },
    });
    return version!;
  });
}

/** Makes `versionId` the version new reports use; an audit event records the old and new pointer. */
export async function publishTemplateVersion(
  db: Executor,
  input: {
    organisationId: number;
    templateId: number;
    versionId: number;
    actor: TemplateActor;
    /** The admin's reason for the change (none when the system installs the default). */
    reason?: string;
  },
): Promise<void> {
  await transaction(db, async (tx) => {
    const [template] = await tx
      .select()
      .from(reportTemplates)
      .where(
        and(
          eq(reportTemplates.id, input.templateId),
          eq(reportTemplates.organisationId, input.organisationId),
        ),
      )
      .for('update');
    if (!template)
      throw new HttpError(404, `There is no report template ${input.templateId} in your organisation.`);
    const [version] = await tx
      .select()
      .from(reportTemplateVersions)
      .where(
        and(
          eq(reportTemplateVersions.id, input.versionId),
          eq(reportTemplateVersions.templateId, template.id),
        ),
      );
    if (!version) throw new HttpError(404, `Template "${template.name}" has no version ${input.versionId}.`);
    if (template.publishedVersionId === version.id) return;
    const before = template.publishedVersionId;
    await tx
      .update(reportTemplates)
      .set({ publishedVersionId: version.id, updatedAt: sql`now()` })
      .where(eq(reportTemplates.id, template.id));
    await appendAuditEvent(tx, {
      organisationId: input.organisationId,
      actorUserId: input.actor.userId,
      actorLabel: input.actor.label,
      action: 'report-template.published',
      recordType: 'report_template',
      recordId: template.id,
      before: { publishedVersionId: before },
      after: {
        publishedVersionId: version.id,
        versionNumber: version.versionNumber,
        sha256: version.sha256,
        ...(input.reason === undefined ? {} : { reason: input.reason }),
      },
    });
  });
}

/** Creates a template (no versions yet). */
export async function createTemplate(tx: Executor, organisationId: number, name: string) {
  const [template] = await tx.insert(reportTemplates).values({ organisationId, name }).returning();
  return template!;
}

/**
 * The template version new reports of the organisation use; installs the shipped default as
 * version 1, published, when the organisation has none yet. Call inside the creating transaction.
 */
export async function templateVersionForNewReports(
  tx: Executor,
  organisationId: number,
): Promise<TemplateVersion> {
  const found = await publishedVersion(tx, organisationId);
  if (found) return found;
  await tx.execute(sql`select pg_advisory_xact_lock(${TEMPLATE_LOCK}, ${organisationId})`);
  const again = await publishedVersion(tx, organisationId);
  if (again) return again;
  await installDefaultTemplate(tx, organisationId);
  return (await publishedVersion(tx, organisationId))!;
}

/** Installs `templates/default/` as a published version 1 (the seed and first use call it). */
export async function installDefaultTemplate(
  tx: Executor,
  organisationId: number,
  dir = DEFAULT_TEMPLATE_DIR,
) {
  const source = loadDefaultTemplate(dir);
  const actor = { userId: null, label: SYSTEM_ACTOR };
  const [existing] = await tx
    .select()
    .from(reportTemplates)
    .where(
      and(
        eq(reportTemplates.organisationId, organisationId),
        eq(reportTemplates.name, DEFAULT_TEMPLATE_NAME),
      ),
    );
  const template = existing ?? (await createTemplate(tx, organisationId, DEFAULT_TEMPLATE_NAME));
  const version = await createTemplateVersion(tx, {
    organisationId,
    templateId: template.id,
    source,
    note: 'Default template shipped with Rateledger (templates/default).',
    actor,
  });
  await publishTemplateVersion(tx, { organisationId, templateId: template.id, versionId: version.id, actor });
  return version;
}

async function publishedVersion(tx: Executor, organisationId: number): Promise<TemplateVersion | undefined> {
  const [row] = await tx
    .select({ version: reportTemplateVersions })
    .from(reportTemplates)
    .innerJoin(reportTemplateVersions, eq(reportTemplateVersions.id, reportTemplates.publishedVersionId))
    .where(
      and(eq(reportTemplates.organisationId, organisationId), isNotNull(reportTemplates.publishedVersionId)),
    )
    .orderBy(desc(reportTemplates.updatedAt), desc(reportTemplates.id))
    .limit(1);
  return row?.version;
}

/** Runs `work` in the caller's transaction, or opens one. */
function transaction<T>(db: Executor, work: (tx: Executor) => Promise<T>): Promise<T> {
  if ('rollback' in db) return work(db);
  return (db as Database).transaction(work);
}
