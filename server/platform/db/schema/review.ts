import { index, integer, jsonb, pgEnum, pgTable, serial, text, timestamp, unique } from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { reportVersions } from './reports.ts';
import { reviewChecklists } from './review-checklists.ts';
import { users } from './users.ts';

/**
 * Where a rendered report version stands in review: draft → in_review → signed, or back to
 * draft as `returned` with a comment. `signed` is final: a trigger refuses any change to a signed
 * version's workflow row, and corrections are a new report version reviewed again.
 */
export const reviewStateEnum = pgEnum('review_state', ['draft', 'in_review', 'returned', 'signed']);

export const reportReviews = pgTable(
  'report_reviews',
  {
    reportVersionId: integer('report_version_id')
      .primaryKey()
      .references(() => reportVersions.id),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    state: reviewStateEnum('state').notNull().default('draft'),
    /** Who submitted the version for review (its author, for segregation of duties). */
    submittedBy: integer('submitted_by').references(() => users.id),
    submittedAt: timestamp('submitted_at', { withTimezone: true, mode: 'date' }),
    /** Review rounds: each submission after a return starts a new round. */
    round: integer('round').notNull().default(0),
    lastComment: text('last_comment'),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (table) => [index('report_reviews_org_state').on(table.organisationId, table.state)],
);

/** The reviewers the author chose for one round of a version's review. */
export const reviewAssignments = pgTable(
  'review_assignments',
  {
    id: serial('id').primaryKey(),
    reportVersionId: integer('report_version_id')
      .notNull()
      .references(() => reportVersions.id),
    round: integer('round').notNull(),
    reviewerId: integer('reviewer_id')
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (table) => [unique('review_assignments_once').on(table.reportVersionId, table.round, table.reviewerId)],
);

/**
 * An electronic signature (21 CFR 11.50, 11.70, 11.200): the signer's printed name, the meaning,
 * the database time with the organisation's time zone, an optional comment, and the SHA-256 of
 * the exact signed PDF that carries the manifestation, which links the signature to that record
 * so it cannot be copied to another. Write-once (trigger).
 */
export const signatures = pgTable(
  'signatures',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id')
      .notNull()
      .references(() => organisations.id),
    reportVersionId: integer('report_version_id')
      .notNull()
      .references(() => reportVersions.id),
    signerId: integer('signer_id')
      .notNull()
      .references(() => users.id),
    signerPrintedName: text('signer_printed_name').notNull(),
    meaning: text('meaning').notNull(),
    comment: text('comment'),
    signedAt: createdAt(),
    /** IANA zone the manifestation was printed in. */
    timeZone: text('time_zone').notNull(),
    /** SHA-256 of the rendered version the signer reviewed. */
    reviewedPdfSha256: text('reviewed_pdf_sha256').notNull(),
    /** SHA-256 of the signed PDF (manifestation page + digital seal), set when it is produced. */
    signedPdfSha256: text('signed_pdf_sha256'),
    /** The review checklist version the signer confirmed (null when the organisation had none). */
    checklistVersionId: integer('checklist_version_id').references(() => reviewChecklists.id),
    /** The checklist items the signer confirmed, copied so the signature record stands alone. */
    checklistConfirmed: jsonb('checklist_confirmed').$type<string[]>(),
  },
  (table) => [index('signatures_version').on(table.reportVersionId)],
);

/**
 * The signed PDF of a version (signatures page filled, PAdES seal applied), stored
 * content-addressed under REPORTS_DIR like every other PDF. Write-once; a further signature makes
 * a new row that supersedes the previous output.
 */
export const signedOutputs = pgTable('signed_outputs', {
  id: serial('id').primaryKey(),
  reportVersionId: integer('report_version_id')
    .notNull()
    .references(() => reportVersions.id),
  pdfSha256: text('pdf_sha256').notNull().unique(),
  pdfByteSize: integer('pdf_byte_size').notNull(),
  signatureCount: integer('signature_count').notNull(),
  createdAt: createdAt(),
});

/** Failed signing attempts per user: repeated failures lock signing (21 CFR 11.300(d)). */
export const signingLockouts = pgTable('signing_lockouts', {
  userId: integer('user_id')
    .primaryKey()
    .references(() => users.id),
  failedAttempts: integer('failed_attempts').notNull().default(0),
  lockedUntil: timestamp('locked_until', { withTimezone: true, mode: 'date' }),
  updatedAt: updatedAt(),
});
