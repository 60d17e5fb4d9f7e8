import { index, integer, jsonb, pgEnum, pgTable, serial, text, unique } from 'drizzle-orm/pg-core';
import { analysisRuns } from './analysis-runs.ts';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { studies } from './studies.ts';
import { users } from './users.ts';

/**
 * How a study version came to be: the study's creation, an edit with a reason for change, or the
 * record made by migration 0010 from each study as it stood when versions were introduced.
 */
export const studyVersionOriginEnum = pgEnum('study_version_origin', [
  'created',
  'edited',
  'recorded-at-migration',
]);

/**
 * One version of a study's values (every field the study form edits), numbered from 1 per study.
 * Write-once (a trigger refuses UPDATE, DELETE and TRUNCATE): an edit appends version n + 1 with
 * the fields that changed and the reason for change (21 CFR 11.10(e); EU GMP Annex 11 §9).
 */
export const studyVersions = pgTable(
  'study_versions',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    studyId: integer('study_id')
      .notNull()
      .references(() => studies.id),
    versionNumber: integer('version_number').notNull(),
    /** The study's values in this version, keyed as the study form's fields. */
    values: jsonb('values').$type<Record<string, unknown>>().notNull(),
    /** The fields that changed from the previous version (all of them for version 1). */
    changedFields: jsonb('changed_fields').$type<string[]>().notNull(),
    reason: text('reason').notNull(),
    origin: studyVersionOriginEnum('origin').notNull(),
    recordedBy: integer('recorded_by')
      .notNull()
      .references(() => users.id),
    recordedAt: createdAt(),
  },
  (table) => [unique('study_versions_number').on(table.studyId, table.versionNumber)],
);

/** Whether the link was written with the run, or by migration 0010 for a run recorded before. */
export const runStudyVersionOriginEnum = pgEnum('run_study_version_origin', [
  'with-run',
  'recorded-at-migration',
]);

/**
 * The study version an analysis run was computed against. Write-once. Kept beside the run rather
 * than in `analysis_runs` so that the runs recorded before study versions could be linked by a
 * migration without updating a write-once row.
 */
export const analysisRunStudyVersions = pgTable(
  'analysis_run_study_versions',
  {
    analysisRunId: integer('analysis_run_id')
      .primaryKey()
      .references(() => analysisRuns.id),
    studyVersionId: integer('study_version_id')
      .notNull()
      .references(() => studyVersions.id),
    origin: runStudyVersionOriginEnum('origin').notNull(),
    recordedAt: createdAt(),
  },
  (table) => [index('analysis_run_study_versions_version').on(table.studyVersionId)],
);
