import {
  customType,
  doublePrecision,
  integer,
  jsonb,
  pgTable,
  serial,
  text,
  unique,
} from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { reportVersions } from './reports.ts';
import { users } from './users.ts';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * A temperature-log assessment: a data-logger file from a warehouse or a shipment, stored byte
 * for byte with its SHA-256, the columns and settings it was read with, and the result computed
 * once (MKT, extremes, excursions, gaps, windows) with the engine version that computed it.
 * Write-once (a trigger refuses UPDATE, DELETE and TRUNCATE): what a reviewer saw stays what it
 * was (ALCOA+ "original", "enduring"; 21 CFR 11.10(e)).
 */
export const temperatureLogAssessments = pgTable('temperature_log_assessments', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  /** What the log is of, in the analyst's words ("Store room B, July 2026"). */
  title: text('title').notNull(),
  fileName: text('file_name').notNull(),
  /** 'xlsx' or 'csv', decided from the content. */
  format: text('format').notNull(),
  sizeBytes: integer('size_bytes').notNull(),
  sha256: text('sha256').notNull(),
  content: bytea('content').notNull(),
  /** The columns as validated by `temperatureLogMappingSchema`. */
  mapping: jsonb('mapping').notNull(),
  /** The settings as validated by `temperatureLogSettingsSchema`. */
  settings: jsonb('settings').notNull(),
  /** The `TemperatureLogDocument`, exactly as computed. */
  result: jsonb('result').notNull(),
  /**
   * The figure, drawn once when the assessment was made (SVG): the record is write-once, so the
   * picture a reviewer sees is the one that was made, never redrawn by newer code.
   */
  figureSvg: text('figure_svg').notNull(),
  /** Copied out of the result for lists. */
  mktC: doublePrecision('mkt_c').notNull(),
  maxC: doublePrecision('max_c').notNull(),
  excursionCount: integer('excursion_count').notNull(),
  engineVersion: text('engine_version').notNull(),
  createdBy: integer('created_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
});

/**
 * A temperature-log assessment attached to a report version: printed in that version as an
 * excursion assessment, so it goes through the same review and signature as the rest of the
 * report. Write-once like the version it belongs to; a later version lists its own attachments.
 */
export const reportVersionTemperatureLogs = pgTable(
  'report_version_temperature_logs',
  {
    id: serial('id').primaryKey(),
    reportVersionId: integer('report_version_id')
      .notNull()
      .references(() => reportVersions.id),
    assessmentId: integer('assessment_id')
      .notNull()
      .references(() => temperatureLogAssessments.id),
    /** Order of the assessments in the report, from 1. */
    position: integer('position').notNull(),
  },
  (table) => [unique('report_version_temperature_logs_once').on(table.reportVersionId, table.assessmentId)],
);
