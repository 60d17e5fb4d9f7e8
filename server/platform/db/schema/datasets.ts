import { integer, jsonb, pgTable, serial, text } from 'drizzle-orm/pg-core';
import type { Series } from '../../../../shared/kinetics/types.ts';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { studies } from './studies.ts';
import { uploads } from './uploads.ts';
import { users } from './users.ts';

/**
 * The series read from one upload with one column mapping. Immutable once written; its hash
 * (SHA-256 over the canonical JSON of the series) is what analysis runs record as their input.
 */
export const datasets = pgTable('datasets', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  studyId: integer('study_id')
    .notNull()
    .references(() => studies.id),
  uploadId: integer('upload_id')
    .notNull()
    .references(() => uploads.id),
  /** The column mapping as validated by shared/intake's zod schema. */
  mapping: jsonb('mapping').notNull(),
  series: jsonb('series').$type<Series[]>().notNull(),
  pointCount: integer('point_count').notNull(),
  sha256: text('sha256').notNull(),
  createdBy: integer('created_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
});

/** A column mapping saved under a name, reusable for the next workbook of the same layout. */
export const savedMappings = pgTable('saved_mappings', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  name: text('name').notNull(),
  /** Header cells of the mapped sheet, used to offer the mapping for a matching workbook. */
  headerSignature: jsonb('header_signature').$type<string[]>().notNull(),
  mapping: jsonb('mapping').notNull(),
  createdBy: integer('created_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
});
