import { customType, integer, jsonb, pgTable, serial, text } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { datasets } from './datasets.ts';
import { organisations } from './organisations.ts';
import { studies } from './studies.ts';
import { users } from './users.ts';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * One run of the kinetics engine: exactly what went in (dataset and its hash, options,
 * exclusions with reasons), which engine version computed it, the full result and the method
 * statement. Immutable (a trigger refuses UPDATE and DELETE); a changed exclusion is a new run
 * that points at the one it supersedes, and the earlier run stays readable.
 *
 * The result is stored in one of two forms, told apart by `result_form` (issue 16):
 * - 'json' (every run before issue 16): `result` holds the whole stored result as JSON.
 * - 'compact-1': `result` holds the result without its long number lists, each replaced by a
 *   reference into `result_arrays`, the exact IEEE-754 doubles (little-endian) of those lists;
 *   the observations themselves are not repeated (they are the dataset's). See
 *   `server/features/analysis/compact-result.ts`. Both forms are read; neither is ever rewritten.
 */
export const analysisRuns = pgTable('analysis_runs', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  studyId: integer('study_id')
    .notNull()
    .references(() => studies.id),
  datasetId: integer('dataset_id')
    .notNull()
    .references(() => datasets.id),
  datasetSha256: text('dataset_sha256').notNull(),
  options: jsonb('options').notNull(),
  exclusions: jsonb('exclusions').notNull().default([]),
  engineVersion: text('engine_version').notNull(),
  result: jsonb('result').notNull(),
  resultForm: text('result_form').notNull().default('json'),
  resultArrays: bytea('result_arrays'),
  methodStatement: text('method_statement').notNull(),
  supersedesRunId: integer('supersedes_run_id'),
  runBy: integer('run_by')
    .notNull()
    .references(() => users.id),
  runAt: createdAt(),
});
