import { customType, integer, pgTable, serial, text } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { studies } from './studies.ts';
import { users } from './users.ts';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * An uploaded file, stored byte for byte with its SHA-256. Never modified (a trigger refuses
 * UPDATE and DELETE): the datasets parsed from it refer back to it ("original" in ALCOA+).
 */
export const uploads = pgTable('uploads', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  studyId: integer('study_id')
    .notNull()
    .references(() => studies.id),
  fileName: text('file_name').notNull(),
  mediaType: text('media_type').notNull(),
  /** 'xlsx' or 'csv', decided from the content, not the name. */
  format: text('format').notNull(),
  sizeBytes: integer('size_bytes').notNull(),
  sha256: text('sha256').notNull(),
  content: bytea('content').notNull(),
  uploadedBy: integer('uploaded_by')
    .notNull()
    .references(() => users.id),
  uploadedAt: createdAt(),
});
