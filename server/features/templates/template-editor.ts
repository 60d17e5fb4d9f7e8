import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import type {
  SaveTemplateVersionRequest,
  TemplateDiffResponse,
  TemplateEditorResponse,
  TemplateSummary,
  TemplateVersionResponse,
  TemplateVersionSummary,
} from '../../../shared/api/templates.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  analysisRuns,
  reportTemplates,
  reportTemplateVersions,
  studies,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import {
  createTemplateVersion,
  TEMPLATE_HELPERS,
  TEMPLATE_VARIABLES,
  type TemplateVersion,
  templateVersionForNewReports,
  versionSource,
} from '../reports/index.ts';
import { diffTemplateSources } from './template-editor-diff.ts';
import { describeProblem, templateProblems } from './template-editor-preview.ts';

/**
 * The admin's report template editor: the organisation's templates and their versions, one
 * version's text, saving a draft as a new version, publishing a version (publishing an earlier
 * one than the published is a rollback), and comparing two versions.
 *
 * Rules, and where they hold:
 * - Versions are immutable and numbered (`report-templates.ts`, and a trigger in the database);
 *   a rendered report version keeps the template version it was printed with, so publishing never
 *   changes an earlier PDF; a new version of a report is printed with the template published then.
 * - A version is saved and published only when it passes `templateProblems` (it compiles and fills
 *   in with the invented sample); the refusal is a 422 naming part, line and column.
 * - Each action is an audit event in the same transaction: `report-template.version-created`
 *   (saved); publishing and its second-admin approval are in `template-publication.ts`.
 * Everything is scoped to the caller's organisation: another organisation's template is a 404.
 */

const SAMPLE_RUN_LIMIT = 25;
const SYSTEM_LABEL = 'Rateledger (shipped default)';

export const actorOf = (user: SessionUser) => ({ userId: user.id, label: user.email });

export function refuse(problems: ReturnType<typeof templateProblems>, what: string): HttpError {
  const first = problems[0];
  const summary = first ? ` First: ${describeProblem(first)}` : '';
  return new HttpError(
    422,
    `${what}: the template has ${problems.length} problem${problems.length === 1 ? '' : 's'}.${summary}`,
    problems.map((problem) => ({ ...problem, field: problem.part })),
  );
}

async function templateRow(db: Executor, organisationId: number, templateId: number) {
  const [template] = await db
    .select()
    .from(reportTemplates)
    .where(and(eq(reportTemplates.id, templateId), eq(reportTemplates.organisationId, organisationId)));
  if (!template) throw new HttpError(404, `There is no report template ${templateId} in your organisation.`);
  return template;
}

export async function versionRow(
  db: Executor,
  templateId: number,
  versionId: number,
): Promise<TemplateVersion> {
  const [version] = await db
    .select()
    .from(reportTemplateVersions)
    .where(and(eq(reportTemplateVersions.id, versionId), eq(reportTemplateVersions.templateId, templateId)));
  if (!version) throw new HttpError(404, `Template ${templateId} has no version ${versionId}.`);
  return version;
}

function summariseVersion(
  version: TemplateVersion,
  createdBy: string | null,
  publishedVersionId: number | null,
): TemplateVersionSummary {
  return {
    id: version.id,
    versionNumber: version.versionNumber,
    sha256: version.sha256,
    note: version.note,
    createdBy: createdBy ?? SYSTEM_LABEL,
    createdAt: version.createdAt.toISOString(),
    published: version.id === publishedVersionId,
  };
}

/** The organisation's templates, newest version first; installs the shipped default on first visit. */
export async function listTemplates(db: Database, organisationId: number): Promise<TemplateSummary[]> {
  const used = await db.transaction((tx) => templateVersionForNewReports(tx, organisationId));
  const templates = await db
    .select()
    .from(reportTemplates)
    .where(eq(reportTemplates.organisationId, organisationId))
    .orderBy(asc(reportTemplates.name));
  if (templates.length === 0) return [];
  const versions = await db
    .select({ version: reportTemplateVersions, createdBy: users.fullName })
    .from(reportTemplateVersions)
    .leftJoin(users, eq(users.id, reportTemplateVersions.createdBy))
    .where(
      inArray(
        reportTemplateVersions.templateId,
        templates.map((template) => template.id),
      ),
    )
    .orderBy(desc(reportTemplateVersions.versionNumber));
  return templates.map((template) => {
    const own = versions.filter((row) => row.version.templateId === template.id);
    const published = own.find((row) => row.version.id === template.publishedVersionId);
    return {
      id: template.id,
      name: template.name,
      publishedVersionId: template.publishedVersionId,
      publishedVersionNumber: published?.version.versionNumber ?? null,
      usedForNewReports: used.templateId === template.id,
      versions: own.map((row) => summariseVersion(row.version, row.createdBy, template.publishedVersionId)),
    };
  });
}

export async function getTemplateSummary(db: Database, organisationId: number, templateId: number) {
  const found = (await listTemplates(db, organisationId)).find((template) => template.id === templateId);
  if (!found) throw new HttpError(404, `There is no report template ${templateId} in your organisation.`);
  return found;
}

/** What the editor opens with: the template, sample analyses to preview with, variables and helpers. */
export async function getTemplateEditor(
  db: Database,
  organisationId: number,
  templateId: number,
): Promise<TemplateEditorResponse> {
  const template = await getTemplateSummary(db, organisationId, templateId);
  const runs = await db
    .select({
      id: analysisRuns.id,
      runAt: analysisRuns.runAt,
      study: studies.title,
      product: studies.product,
    })
    .from(analysisRuns)
    .innerJoin(studies, eq(studies.id, analysisRuns.studyId))
    .where(eq(analysisRuns.organisationId, organisationId))
    .orderBy(desc(analysisRuns.runAt), desc(analysisRuns.id))
    .limit(SAMPLE_RUN_LIMIT);
  return {
    template,
    sampleRuns: runs.map((run) => ({
      id: run.id,
      label: `Run ${run.id} · ${run.study} · ${run.product} · ${run.runAt.toISOString().slice(0, 16).replace('T', ' ')} UTC`,
    })),
    variables: TEMPLATE_VARIABLES.map((variable) => ({
      ...variable,
      insert: variable.path.endsWith('[]')
        ? `{{#each ${variable.path.slice(0, -2)}}}{{/each}}`
        : `{{${variable.path}}}`,
    })),
    helpers: TEMPLATE_HELPERS.map((helper) => ({ ...helper })),
  };
}

export async function getTemplateVersion(
  db: Database,
  organisationId: number,
  templateId: number,
  versionId: number,
): Promise<TemplateVersionResponse> {
  const template = await templateRow(db, organisationId, templateId);
  const version = await versionRow(db, template.id, versionId);
  const [author] = version.createdBy
    ? await db.select({ fullName: users.fullName }).from(users).where(eq(users.id, version.createdBy))
    : [];
  return {
    version: summariseVersion(version, author?.fullName ?? null, template.publishedVersionId),
    source: versionSource(version),
  };
}

/** Saves the draft as the next version; refused (422, located) when it is not fit for reports. */
export async function saveTemplateVersion(
  db: Database,
  user: SessionUser,
  templateId: number,
  request: SaveTemplateVersionRequest,
): Promise<TemplateVersionSummary> {
  await templateRow(db, user.organisationId, templateId);
  const problems = templateProblems(request.source);
  if (problems.length > 0) throw refuse(problems, 'Not saved');
  const version = await createTemplateVersion(db, {
    organisationId: user.organisationId,
    templateId,
    source: request.source,
    note: request.note,
    actor: actorOf(user),
  });
  const [template] = await db.select().from(reportTemplates).where(eq(reportTemplates.id, templateId));
  return summariseVersion(version, user.fullName, template?.publishedVersionId ?? null);
}

/** Part-by-part difference from version `fromId` to version `toId` of one template. */
export async function diffTemplateVersions(
  db: Database,
  organisationId: number,
  templateId: number,
  fromId: number,
  toId: number,
): Promise<TemplateDiffResponse> {
  const from = await getTemplateVersion(db, organisationId, templateId, fromId);
  const to = await getTemplateVersion(db, organisationId, templateId, toId);
  return { from: from.version, to: to.version, parts: diffTemplateSources(from.source, to.source) };
}
