import { type AnyPgColumn, integer, jsonb, pgTable, serial, text, unique } from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/**
 * A report template of one organisation. Its text lives in numbered, immutable versions; the
 * `published_version_id` pointer names the one used for new reports. Moving the pointer
 * (publishing) is an audit event; the versions themselves never change.
 */
export const reportTemplates = pgTable(
  'report_templates',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    name: text('name').notNull(),
    /** The version new reports are rendered with; null until one is published. */
    publishedVersionId: integer('published_version_id').references(
      (): AnyPgColumn => reportTemplateVersions.id,
    ),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (table) => [unique('report_templates_org_name').on(table.organisationId, table.name)],
);

/**
 * One immutable version of a template: the main Handlebars source, its partials (name → source),
 * its stylesheet and the SHA-256 over all three, so a report can prove which text produced it. A trigger refuses
 * UPDATE and DELETE (migration 0004).
 */
export const reportTemplateVersions = pgTable(
  'report_template_versions',
  {
    id: serial('id').primaryKey(),
    templateId: integer('template_id')
      .notNull()
      .references(() => reportTemplates.id),
    versionNumber: integer('version_number').notNull(),
    mainSource: text('main_source').notNull(),
    partials: jsonb('partials').$type<Record<string, string>>().notNull().default({}),
    /** The template's print CSS. */
    stylesheet: text('stylesheet').notNull().default(''),
    sha256: text('sha256').notNull(),
    /** What changed, in the author's words ("Default template shipped with Rateledger"). */
    note: text('note').notNull().default(''),
    /** Null for versions installed by the system (the shipped default). */
    createdBy: integer('created_by').references(() => users.id),
    createdAt: createdAt(),
  },
  (table) => [unique('report_template_versions_number').on(table.templateId, table.versionNumber)],
);
