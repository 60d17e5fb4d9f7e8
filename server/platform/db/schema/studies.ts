import { doublePrecision, integer, jsonb, pgEnum, pgTable, serial, text } from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/** Which way the attribute moves on storage; decides the one- or two-sided Q1E limit. */
export const attributeDirectionEnum = pgEnum('attribute_direction', ['decreasing', 'increasing', 'either']);

/**
 * A stability study: one product, one measured attribute with its acceptance criterion, the
 * storage condition and the batches on test. Changes are audit events with before/after values.
 */
export const studies = pgTable('studies', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  title: text('title').notNull(),
  product: text('product').notNull(),
  /** What is measured, e.g. "Assay" or "Impurity B". */
  attribute: text('attribute').notNull(),
  /** Unit of the measured value, e.g. "% of label claim", "mg/mL", "% area". */
  unit: text('unit').notNull(),
  direction: attributeDirectionEnum('direction').notNull(),
  /** Acceptance criterion: lower and/or upper limit in `unit`. */
  lowerLimit: doublePrecision('lower_limit'),
  upperLimit: doublePrecision('upper_limit'),
  /** Long-term storage condition the shelf-life is claimed for. */
  storageTemperatureC: doublePrecision('storage_temperature_c'),
  storageHumidityPercent: doublePrecision('storage_humidity_percent'),
  /** Batch (lot) identifiers on test. */
  batches: jsonb('batches').$type<string[]>().notNull().default([]),
  notes: text('notes').notNull().default(''),
  createdBy: integer('created_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});
