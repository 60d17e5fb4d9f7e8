import { sql } from 'drizzle-orm';
import { check, integer, pgTable, serial, text } from 'drizzle-orm/pg-core';
import { createdAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { reportTemplates, reportTemplateVersions } from './report-templates.ts';
import { users } from './users.ts';

/**
 * A publication (or roll back) of a template version that waits for a second admin, when the
 * organisation requires one (`organisation_settings.template_publication_needs_second_admin`).
 * Written once: the proposal here, the decision in `template_publication_decisions`; a proposal
 * without a decision is pending. EU GMP Annex 11 §10: changes are made in a controlled manner.
 */
export const templatePublicationRequests = pgTable('template_publication_requests', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  templateId: integer('template_id')
    .notNull()
    .references(() => reportTemplates.id),
  versionId: integer('version_id')
    .notNull()
    .references(() => reportTemplateVersions.id),
  /** The version published when it was proposed (null when none was). */
  previousVersionId: integer('previous_version_id').references(() => reportTemplateVersions.id),
  proposedBy: integer('proposed_by')
    .notNull()
    .references(() => users.id),
  reason: text('reason').notNull(),
  createdAt: createdAt(),
});

/** The second admin's decision on a proposed publication: approved (then published) or refused. */
export const templatePublicationDecisions = pgTable(
  'template_publication_decisions',
  {
    requestId: integer('request_id')
      .primaryKey()
      .references(() => templatePublicationRequests.id),
    decision: text('decision').$type<'approved' | 'refused'>().notNull(),
    decidedBy: integer('decided_by')
      .notNull()
      .references(() => users.id),
    reason: text('reason').notNull(),
    createdAt: createdAt(),
  },
  (table) => [check('template_publication_decision_kind', sql`${table.decision} in ('approved', 'refused')`)],
);
