import { and, desc, eq, isNull } from 'drizzle-orm';
import type {
  DecidePublicationResponse,
  PendingPublication,
  PendingPublicationsResponse,
  PublishOutcome,
} from '../../../shared/api/template-publication.ts';
import type { PublishTemplateVersionResponse } from '../../../shared/api/templates.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  reportTemplates,
  reportTemplateVersions,
  templatePublicationDecisions,
  templatePublicationRequests,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { publishTemplateVersion, type TemplateVersion, versionSource } from '../reports/index.ts';
import { loadOrganisationSettings } from '../settings/index.ts';
import { actorOf, refuse, versionRow } from './template-editor.ts';
import { templateProblems } from './template-editor-preview.ts';

/**
 * Publishing a template version (an earlier one than the published is a roll back), with the
 * organisation's optional second-admin approval (EU GMP Annex 11 §10: changes made in a
 * controlled manner; 21 CFR 11.10(e)).
 *
 * - Setting off: publishing moves the pointer at once (`report-template.published`, and
 *   `report-template.rolled-back` naming both versions), with the admin's reason.
 * - Setting on: publishing writes a write-once proposal (`report-template.publication-proposed`)
 *   and changes nothing new reports use. Another admin — never the proposer — approves
 *   (`report-template.publication-approved`, then the publication itself) or refuses
 *   (`report-template.publication-refused`), with a reason of their own. A decision is written
 *   once (the request id is its primary key), so two admins deciding at once cannot both win.
 * The template row is locked for every step, so the published pointer moves one change at a time.
 */

type Template = typeof reportTemplates.$inferSelect;

async function lockedTemplate(tx: Executor, organisationId: number, templateId: number): Promise<Template> {
  const [template] = await tx
    .select()
    .from(reportTemplates)
    .where(and(eq(reportTemplates.id, templateId), eq(reportTemplates.organisationId, organisationId)))
    .for('update');
  if (!template) throw new HttpError(404, `There is no report template ${templateId} in your organisation.`);
  return template;
}

async function checkedVersion(tx: Executor, template: Template, versionId: number) {
  const version = await versionRow(tx, template.id, versionId);
  const problems = templateProblems(versionSource(version));
  if (problems.length > 0) throw refuse(problems, `Version ${version.versionNumber} cannot be published`);
  const previous = template.publishedVersionId
    ? await versionRow(tx, template.id, template.publishedVersionId)
    : null;
  return { version, previous };
}

/** Moves the published pointer to `version` with its audit events; `by` is who makes it current. */
async function applyPublication(
  tx: Executor,
  by: SessionUser,
  template: Template,
  version: TemplateVersion,
  previous: TemplateVersion | null,
  reason: string,
): Promise<PublishTemplateVersionResponse> {
  await publishTemplateVersion(tx, {
    organisationId: by.organisationId,
    templateId: template.id,
    versionId: version.id,
    actor: actorOf(by),
    reason,
  });
  const rolledBack = previous !== null && version.versionNumber < previous.versionNumber;
  if (rolledBack) {
    await appendAuditEvent(tx, {
      organisationId: by.organisationId,
      actorUserId: by.id,
      actorLabel: by.email,
      action: 'report-template.rolled-back',
      recordType: 'report_template',
      recordId: template.id,
      before: { versionId: previous.id, versionNumber: previous.versionNumber, sha256: previous.sha256 },
      after: { versionId: version.id, versionNumber: version.versionNumber, sha256: version.sha256, reason },
      context: { templateId: template.id, name: template.name },
    });
  }
  return {
    publishedVersionId: version.id,
    publishedVersionNumber: version.versionNumber,
    previousVersionNumber: previous?.versionNumber ?? null,
    rolledBack,
  };
}

/**
 * Publishes `versionId` of the template, or — when the organisation requires a second admin —
 * proposes it. Refused (422) when the version's text no longer passes the check.
 */
export async function publishVersion(
  db: Database,
  user: SessionUser,
  templateId: number,
  versionId: number,
  reason: string,
): Promise<PublishOutcome> {
  return db.transaction(async (tx) => {
    const template = await lockedTemplate(tx, user.organisationId, templateId);
    const { version, previous } = await checkedVersion(tx, template, versionId);
    const settings = await loadOrganisationSettings(tx, user.organisationId);
    if (!settings.templatePublicationNeedsSecondAdmin) {
      const published = await applyPublication(tx, user, template, version, previous, reason);
      return { status: 'published', ...published };
    }
    if (template.publishedVersionId === version.id)
      throw new HttpError(409, `Version ${version.versionNumber} is the published version already.`);
    const [request] = await tx
      .insert(templatePublicationRequests)
      .values({
        organisationId: user.organisationId,
        templateId: template.id,
        versionId: version.id,
        previousVersionId: previous?.id ?? null,
        proposedBy: user.id,
        reason,
      })
      .returning();
    const rollback = previous !== null && version.versionNumber < previous.versionNumber;
    await appendAuditEvent(tx, {
      organisationId: user.organisationId,
      actorUserId: user.id,
      actorLabel: user.email,
      action: 'report-template.publication-proposed',
      recordType: 'report_template',
      recordId: template.id,
      before: previous ? { versionId: previous.id, versionNumber: previous.versionNumber } : null,
      after: {
        requestId: request!.id,
        versionId: version.id,
        versionNumber: version.versionNumber,
        sha256: version.sha256,
        rollback,
        reason,
      },
      context: { templateId: template.id, name: template.name },
    });
    return {
      status: 'pending',
      pending: {
        id: request!.id,
        templateId: template.id,
        versionId: version.id,
        versionNumber: version.versionNumber,
        previousVersionNumber: previous?.versionNumber ?? null,
        rollback,
        reason,
        proposedBy: user.fullName,
        proposedAt: request!.createdAt.toISOString(),
        mayDecide: false,
      },
    };
  });
}

/** The template's proposals without a decision, newest first, and whether the rule is on. */
export async function listPendingPublications(
  db: Database,
  user: SessionUser,
  templateId: number,
): Promise<PendingPublicationsResponse> {
  const [template] = await db
    .select()
    .from(reportTemplates)
    .where(and(eq(reportTemplates.id, templateId), eq(reportTemplates.organisationId, user.organisationId)));
  if (!template) throw new HttpError(404, `There is no report template ${templateId} in your organisation.`);
  const rows = await db
    .select({ request: templatePublicationRequests, version: reportTemplateVersions, proposer: users })
    .from(templatePublicationRequests)
    .innerJoin(reportTemplateVersions, eq(reportTemplateVersions.id, templatePublicationRequests.versionId))
    .innerJoin(users, eq(users.id, templatePublicationRequests.proposedBy))
    .leftJoin(
      templatePublicationDecisions,
      eq(templatePublicationDecisions.requestId, templatePublicationRequests.id),
    )
    .where(
      and(
        eq(templatePublicationRequests.templateId, template.id),
        isNull(templatePublicationDecisions.requestId),
      ),
    )
    .orderBy(desc(templatePublicationRequests.id));
  const publishedNumber = template.publishedVersionId
    ? (await versionRow(db, template.id, template.publishedVersionId)).versionNumber
    : null;
  const previousNumbers = new Map<number, number>();
  for (const row of rows) {
    const previousId = row.request.previousVersionId;
    if (previousId !== null && !previousNumbers.has(previousId))
      previousNumbers.set(previousId, (await versionRow(db, template.id, previousId)).versionNumber);
  }
  const settings = await loadOrganisationSettings(db, user.organisationId);
  const pending: PendingPublication[] = rows.map(({ request, version, proposer }) => ({
    id: request.id,
    templateId: template.id,
    versionId: version.id,
    versionNumber: version.versionNumber,
    previousVersionNumber:
      request.previousVersionId === null ? null : (previousNumbers.get(request.previousVersionId) ?? null),
    rollback: publishedNumber !== null && version.versionNumber < publishedNumber,
    reason: request.reason,
    proposedBy: proposer.fullName,
    proposedAt: request.createdAt.toISOString(),
    mayDecide: request.proposedBy !== user.id,
  }));
  return { needsSecondAdmin: settings.templatePublicationNeedsSecondAdmin, pending };
}

/**
 * A second admin's decision on a proposed publication. The proposer is refused (403); a proposal
 * decided already is a 409. An approval publishes the proposed version (a roll back when it is
 * earlier than the one published by then), recorded with the proposer's reason; both reasons are
 * in the decision's audit event.
 */
export async function decidePublication(
  db: Database,
  user: SessionUser,
  templateId: number,
  requestId: number,
  decision: 'approve' | 'refuse',
  reason: string,
): Promise<DecidePublicationResponse> {
  return db.transaction(async (tx) => {
    const template = await lockedTemplate(tx, user.organisationId, templateId);
    const [request] = await tx
      .select()
      .from(templatePublicationRequests)
      .where(
        and(
          eq(templatePublicationRequests.id, requestId),
          eq(templatePublicationRequests.templateId, template.id),
        ),
      );
    if (!request)
      throw new HttpError(404, `Template ${templateId} has no proposed publication ${requestId}.`);
    if (request.proposedBy === user.id)
      throw new HttpError(
        403,
        'You proposed this publication; another admin must approve or refuse it (a change is never approved by the one who makes it).',
      );
    const [decided] = await tx
      .select()
      .from(templatePublicationDecisions)
      .where(eq(templatePublicationDecisions.requestId, request.id));
    if (decided)
      throw new HttpError(409, `This proposed publication was ${decided.decision} already; nothing changed.`);
    const outcome = decision === 'approve' ? 'approved' : 'refused';
    await tx
      .insert(templatePublicationDecisions)
      .values({ requestId: request.id, decision: outcome, decidedBy: user.id, reason });
    const version = await versionRow(tx, template.id, request.versionId);
    await appendAuditEvent(tx, {
      organisationId: user.organisationId,
      actorUserId: user.id,
      actorLabel: user.email,
      action: `report-template.publication-${outcome}`,
      recordType: 'report_template',
      recordId: template.id,
      before: { requestId: request.id, proposedBy: request.proposedBy, proposalReason: request.reason },
      after: {
        requestId: request.id,
        versionId: version.id,
        versionNumber: version.versionNumber,
        sha256: version.sha256,
        decision: outcome,
        reason,
      },
      context: { templateId: template.id, name: template.name },
    });
    if (outcome === 'refused') return { decision: outcome, published: null };
    const checked = await checkedVersion(tx, template, version.id);
    const published = await applyPublication(
      tx,
      user,
      template,
      checked.version,
      checked.previous,
      request.reason,
    );
    return { decision: outcome, published };
  });
}
