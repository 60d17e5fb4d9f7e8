/**
 * Studies: create, change, list and show, each change an audit event in the same transaction.
 *
 * The audit event of a change records, in `before` and `after`, only the fields that changed (on
 * creation every field changed from nothing, so `before` is null and `after` holds them all). A
 * save that changes nothing writes nothing. Every query is scoped to the caller's organisation; a
 * study of another organisation is "not found", never "forbidden", so ids reveal nothing.
 */
import { and, desc, eq, sql } from 'drizzle-orm';
import { STUDY_FIELDS, type StudyInput } from '../../../shared/api/studies.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import { analysisRuns, datasets, studies, uploads, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { sameStudyValue } from './study-attribute-changes.ts';
import { recordStudyVersion } from './study-versions.ts';

export type Study = typeof studies.$inferSelect;

import type { AuditContext } from '../../platform/audit/audit-context.ts';

export type { AuditContext };

function auditedFields(study: StudyInput | Study): Record<string, unknown> {
  return Object.fromEntries(STUDY_FIELDS.map((field) => [field, study[field]]));
}

export async function listStudies(db: Executor, organisationId: number) {
  return db
    .select({
      id: studies.id,
      title: studies.title,
      product: studies.product,
      attribute: studies.attribute,
      unit: studies.unit,
      lowerLimit: studies.lowerLimit,
      upperLimit: studies.upperLimit,
      additionalAttributes: studies.additionalAttributes,
      storageTemperatureC: studies.storageTemperatureC,
      storageHumidityPercent: studies.storageHumidityPercent,
      batches: studies.batches,
      updatedAt: studies.updatedAt,
    })
    .from(studies)
    .where(eq(studies.organisationId, organisationId))
    .orderBy(desc(studies.updatedAt), desc(studies.id));
}

/** The study, or a 404 when it does not exist in this organisation. */
export async function findStudy(db: Executor, organisationId: number, studyId: number): Promise<Study> {
  const [study] = await db
    .select()
    .from(studies)
    .where(and(eq(studies.id, studyId), eq(studies.organisationId, organisationId)));
  if (!study) throw new HttpError(404, `There is no study ${studyId} in your organisation.`);
  return study;
}

export async function createStudy(
  db: Database,
  actor: SessionUser,
  input: StudyInput,
  context: AuditContext,
) {
  return db.transaction(async (tx) => {
    const [study] = await tx
      .insert(studies)
      .values({ ...input, organisationId: actor.organisationId, createdBy: actor.id })
      .returning();
    await recordStudyVersion(tx, {
      study: study!,
      changedFields: [...STUDY_FIELDS],
      reason: 'Study created.',
      origin: 'created',
      recordedBy: actor.id,
    });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'study.created',
      recordType: 'study',
      recordId: study!.id,
      before: null,
      after: auditedFields(study!),
      context,
    });
    return study!;
  });
}

/**
 * Saves the changed fields as a new study version with the reason for change; returns the study
 * and the names of the fields that changed. A change without a reason is refused (400, naming the
 * `reasonForChange` field) and writes nothing.
 */
export async function updateStudy(
  db: Database,
  actor: SessionUser,
  studyId: number,
  input: StudyInput,
  reason: string,
  context: AuditContext,
): Promise<{ study: Study; changed: string[] }> {
  return db.transaction(async (tx) => {
    const [current] = await tx
      .select()
      .from(studies)
      .where(and(eq(studies.id, studyId), eq(studies.organisationId, actor.organisationId)))
      .for('update');
    if (!current) throw new HttpError(404, `There is no study ${studyId} in your organisation.`);
    const changed = STUDY_FIELDS.filter((field) => !sameStudyValue(current[field], input[field]));
    if (changed.length === 0) return { study: current, changed: [] };
    const reasonForChange = reason.trim();
    if (reasonForChange === '') {
      const message = 'Give the reason for this change: it is kept with the new study version.';
      throw new HttpError(400, message, [{ field: 'reasonForChange', message }]);
    }
    const before = Object.fromEntries(changed.map((field) => [field, current[field]]));
    const after = Object.fromEntries(changed.map((field) => [field, input[field]]));
    const [study] = await tx
      .update(studies)
      .set({ ...after, updatedAt: new Date() })
      .where(eq(studies.id, studyId))
      .returning();
    const version = await recordStudyVersion(tx, {
      study: study!,
      changedFields: changed,
      reason: reasonForChange,
      origin: 'edited',
      recordedBy: actor.id,
    });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'study.updated',
      recordType: 'study',
      recordId: studyId,
      before,
      after: { ...after, reasonForChange, studyVersion: version.versionNumber },
      context,
    });
    return { study: study!, changed };
  });
}

/** What the study page lists: its uploads, datasets and analysis runs, newest first. */
export async function studyOverview(db: Executor, organisationId: number, studyId: number) {
  const study = await findStudy(db, organisationId, studyId);
  const uploadRows = await db
    .select({
      id: uploads.id,
      fileName: uploads.fileName,
      format: uploads.format,
      sizeBytes: uploads.sizeBytes,
      sha256: uploads.sha256,
      uploadedAt: uploads.uploadedAt,
      uploadedBy: users.fullName,
    })
    .from(uploads)
    .innerJoin(users, eq(users.id, uploads.uploadedBy))
    .where(eq(uploads.studyId, studyId))
    .orderBy(desc(uploads.id));
  const datasetRows = await db
    .select({
      id: datasets.id,
      uploadId: datasets.uploadId,
      pointCount: datasets.pointCount,
      sha256: datasets.sha256,
      seriesCount: sql<number>`jsonb_array_length(${datasets.series})`,
      seriesNames: sql<string>`(select string_agg(entry->>'id', ', ') from jsonb_array_elements(${datasets.series}) entry)`,
      createdAt: datasets.createdAt,
      createdBy: users.fullName,
      createdById: datasets.createdBy,
    })
    .from(datasets)
    .innerJoin(users, eq(users.id, datasets.createdBy))
    .where(eq(datasets.studyId, studyId))
    .orderBy(desc(datasets.id));
  const runRows = await db
    .select({
      id: analysisRuns.id,
      datasetId: analysisRuns.datasetId,
      runAt: analysisRuns.runAt,
      runBy: users.fullName,
      runById: analysisRuns.runBy,
      supersedesRunId: analysisRuns.supersedesRunId,
    })
    .from(analysisRuns)
    .innerJoin(users, eq(users.id, analysisRuns.runBy))
    .where(eq(analysisRuns.studyId, studyId))
    .orderBy(desc(analysisRuns.id));
  return {
    study,
    uploads: uploadRows,
    datasets: datasetRows,
    runs: runRows,
  };
}
