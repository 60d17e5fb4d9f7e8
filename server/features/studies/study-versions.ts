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
import { attributeListChanges, sameStudyValue } from './study-attribute-changes.ts';

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
  censoredRule: 'rule for results below the limit',
  censoredValue: 'stated value for results below the limit',
  massBalanceRole: 'mass-balance role',
  additionalAttributes: 'further attributes',
  batches: 'batches',
  notes: 'notes',
};

/**
 * What a version recorded before a field existed reads as: the value every study had when the
 * field was added (migration 0020: a study of one attribute whose results below a limit are
 * excluded, with no part in a mass balance). Read with these, an old version and the next one
 * differ only where the analyst changed something.
 */
export const STUDY_VERSION_DEFAULTS: Partial<Record<(typeof STUDY_FIELDS)[number], unknown>> = {
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
  additionalAttributes: [],
};

/** A version's values with the fields it predates read as their defaults. */
export function versionValues(values: StudyValues): StudyValues {
  return { ...STUDY_VERSION_DEFAULTS, ...values };
}

/** The values of the study that a version keeps: every field the study form edits. */
export function studyValues(study: Study): StudyValues {
  return Object.fromEntries(STUDY_FIELDS.map((field) => [field, study[field]]));
}

function shown(value: unknown): string {
  if (value === null || value === undefined || value === '') return 'none';
  if (Array.isArray(value))
    return value.length === 0 ? 'none' : value.map((entry) => shown(entry)).join(', ');
  if (typeof value === 'object') return JSON.stringify(value);
  return String(value);
}

/** The first attribute's own fields: named with the attribute once the study lists several. */
const FIRST_ATTRIBUTE_FIELDS = new Set([
  'unit',
  'direction',
  'lowerLimit',
  'upperLimit',
  'workingOrder',
  'workingOrderReason',
  'censoredRule',
  'censoredValue',
  'massBalanceRole',
]);

export interface StudyChange {
  field: string;
  label: string;
  before: string;
  after: string;
}

/**
 * The fields that differ between two sets of study values, in form order; a change in the further
 * attributes reads per attribute and field ("Impurity B: upper limit 0.5 → 1").
 */
export function studyChanges(beforeValues: StudyValues, afterValues: StudyValues): StudyChange[] {
  const before = versionValues(beforeValues);
  const after = versionValues(afterValues);
  const fields = [...new Set([...STUDY_FIELDS, ...Object.keys(after)])];
  const several = [before, after].some(
    (values) => Array.isArray(values.additionalAttributes) && values.additionalAttributes.length > 0,
  );
  return fields
    .filter((field) => field in after && !sameStudyValue(before[field], after[field]))
    .flatMap((field) => {
      if (field === 'additionalAttributes') {
        return attributeListChanges(before[field], after[field]).map((change) => ({
          field,
          label: change.label,
          before: shown(change.before),
          after: shown(change.after),
        }));
      }
      const label = FIELD_LABELS[field] ?? field;
      return [
        {
          field,
          label:
            several && FIRST_ATTRIBUTE_FIELDS.has(field) ? `${String(after.attribute)}: ${label}` : label,
          before: shown(before[field]),
          after: shown(after[field]),
        },
      ];
    });
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

/**
 * Every version of a study, newest first, for the study page, each with what it changed from the
 * version before (none for the first).
 */
export async function listStudyVersions(db: Executor, studyId: number) {
  const rows = await db
    .select({
      versionNumber: studyVersions.versionNumber,
      recordedAt: studyVersions.recordedAt,
      recordedBy: users.fullName,
      reason: studyVersions.reason,
      origin: studyVersions.origin,
      changedFields: studyVersions.changedFields,
      values: studyVersions.values,
    })
    .from(studyVersions)
    .innerJoin(users, eq(users.id, studyVersions.recordedBy))
    .where(eq(studyVersions.studyId, studyId))
    .orderBy(asc(studyVersions.versionNumber));
  let previous: StudyValues | null = null;
  const versions = rows.map(({ values, ...row }) => {
    const changes = previous === null ? [] : studyChanges(previous, values);
    previous = values;
    return { ...row, changes };
  });
  return versions.reverse();
}

/** The field errors of a refused change for lack of a reason, or null for any other error. */
export function reasonRefusal(error: unknown): Record<string, string> | null {
  if (!(error instanceof HttpError) || error.status !== 400 || !Array.isArray(error.details)) return null;
  const entry = (error.details as { field?: string; message?: string }[]).find(
    (detail) => detail.field === 'reasonForChange',
  );
  return entry?.message ? { reasonForChange: entry.message } : null;
}
