/**
 * Study versions: every creation and every edit of a study appends a numbered, write-once version
 * holding all the values the study form edits, with the fields that changed and the reason for
 * change (21 CFR 11.10(e): changes recorded without obscuring what was there before; EU GMP Annex
 * 11 §9: the reason for a change to GMP-relevant data is documented). Analysis runs point at the
 * version they were computed against, so what a run used is known whatever the study says later.
 */
import { and, asc, desc, eq, gt } from 'drizzle-orm';
import { STUDY_FIELDS } from '../../../shared/api/studies.ts';
import type { Executor } from '../../platform/db/client.ts';
import { type studies, studyVersions, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';

type Study = typeof studies.$inferSelect;
export type StudyVersion = typeof studyVersions.$inferSelect;
export type StudyValues = Record<string, unknown>;

/** How each field reads in a sentence ("lower limit 95 → 90"). */
const FIELD_LABELS: Record<string, string> = {
  title: 'title',
  product: 'product',
  attribute: 'attribute',
  unit: 'unit',
  direction: 'direction',
  lowerLimit: 'lower limit',
  upperLimit: 'upper limit',
  storageTemperatureC: 'storage temperature (°C)',
  storageHumidityPercent: 'relative humidity (%)',
  storageCategory: 'storage category',
  intermediateTemperatureC: 'intermediate condition (°C)',
  acceleratedTemperatureC: 'accelerated condition (°C)',
  acceleratedChange: 'significant change at the accelerated condition',
  intermediateChange: 'significant change at the intermediate condition',
  littleChange: 'little change',
  supportingData: 'supporting data',
  declarationBasis: 'basis of the declaration',
  workingOrder: 'working order',
  workingOrderReason: 'reason for the working order',
  batches: 'batches',
  notes: 'notes',
};

/** The values of the study that a version keeps: every field the study form edits. */
export function studyValues(study: Study): StudyValues {
  return Object.fromEntries(STUDY_FIELDS.map((field) => [field, study[field]]));
}

function shown(value: unknown): string {
  if (value === null || value === undefined || value === '') return 'none';
  if (Array.isArray(value)) return value.length === 0 ? 'none' : value.join(', ');
  return String(value);
}

export interface StudyChange {
  field: string;
  label: string;
  before: string;
  after: string;
}

/** The fields that differ between two sets of study values, in form order. */
export function studyChanges(before: StudyValues, after: StudyValues): StudyChange[] {
  const fields = [...new Set([...STUDY_FIELDS, ...Object.keys(after)])];
  return fields
    .filter(
      (field) => field in after && JSON.stringify(before[field] ?? null) !== JSON.stringify(after[field]),
    )
    .map((field) => ({
      field,
      label: FIELD_LABELS[field] ?? field,
      before: shown(before[field]),
      after: shown(after[field]),
    }));
}

export async function latestStudyVersion(db: Executor, studyId: number): Promise<StudyVersion | null> {
  const [latest] = await db
    .select()
    .from(studyVersions)
    .where(eq(studyVersions.studyId, studyId))
    .orderBy(desc(studyVersions.versionNumber))
    .limit(1);
  return latest ?? null;
}

/** Appends the next version of the study; call inside the transaction that changes the study. */
export async function recordStudyVersion(
  tx: Executor,
  input: {
    study: Study;
    changedFields: readonly string[];
    reason: string;
    origin: 'created' | 'edited';
    recordedBy: number;
  },
): Promise<StudyVersion> {
  const latest = await latestStudyVersion(tx, input.study.id);
  const [version] = await tx
    .insert(studyVersions)
    .values({
      organisationId: input.study.organisationId,
      studyId: input.study.id,
      versionNumber: (latest?.versionNumber ?? 0) + 1,
      values: studyValues(input.study),
      changedFields: [...input.changedFields],
      reason: input.reason,
      origin: input.origin,
      recordedBy: input.recordedBy,
    })
    .returning();
  return version!;
}

/**
 * The study's latest version, recording version 1 from the study as it is when it has none (a
 * study written without the study form, e.g. by the demo seed). Call inside a transaction that
 * holds the study row.
 */
export async function ensureStudyVersion(
  tx: Executor,
  study: Study,
  recordedBy: number,
): Promise<StudyVersion> {
  const latest = await latestStudyVersion(tx, study.id);
  if (latest) return latest;
  return recordStudyVersion(tx, {
    study,
    changedFields: [...STUDY_FIELDS],
    reason: 'Recorded with the first analysis: the study had no version yet.',
    origin: 'created',
    recordedBy,
  });
}

export interface StudyVersionEntry {
  versionNumber: number;
  recordedAt: Date;
  recordedBy: string;
  reason: string;
  origin: StudyVersion['origin'];
  changes: StudyChange[];
}

/** The versions recorded after `versionNumber`, each with what it changed from the one before. */
export async function studyVersionsAfter(
  db: Executor,
  studyId: number,
  version: StudyVersion,
): Promise<StudyVersionEntry[]> {
  const rows = await db
    .select({ version: studyVersions, recordedBy: users.fullName })
    .from(studyVersions)
    .innerJoin(users, eq(users.id, studyVersions.recordedBy))
    .where(and(eq(studyVersions.studyId, studyId), gt(studyVersions.versionNumber, version.versionNumber)))
    .orderBy(asc(studyVersions.versionNumber));
  let previous = version.values;
  return rows.map((row) => {
    const entry = {
      versionNumber: row.version.versionNumber,
      recordedAt: row.version.recordedAt,
      recordedBy: row.recordedBy,
      reason: row.version.reason,
      origin: row.version.origin,
      changes: studyChanges(previous, row.version.values),
    };
    previous = row.version.values;
    return entry;
  });
}

/** Every version of a study, newest first, for the study page. */
export async function listStudyVersions(db: Executor, studyId: number) {
  return db
    .select({
      versionNumber: studyVersions.versionNumber,
      recordedAt: studyVersions.recordedAt,
      recordedBy: users.fullName,
      reason: studyVersions.reason,
      origin: studyVersions.origin,
      changedFields: studyVersions.changedFields,
    })
    .from(studyVersions)
    .innerJoin(users, eq(users.id, studyVersions.recordedBy))
    .where(eq(studyVersions.studyId, studyId))
    .orderBy(desc(studyVersions.versionNumber));
}

/** The field errors of a refused change for lack of a reason, or null for any other error. */
export function reasonRefusal(error: unknown): Record<string, string> | null {
  if (!(error instanceof HttpError) || error.status !== 400 || !Array.isArray(error.details)) return null;
  const entry = (error.details as { field?: string; message?: string }[]).find(
    (detail) => detail.field === 'reasonForChange',
  );
  return entry?.message ? { reasonForChange: entry.message } : null;
}
