import {
  boolean,
  doublePrecision,
  integer,
  jsonb,
  pgTable,
  serial,
  text,
  timestamp,
} from 'drizzle-orm/pg-core';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/** A default acceptance criterion an analyst can pick when creating a study. */
export interface AcceptancePreset {
  attribute: string;
  unit: string;
  direction: 'decreasing' | 'increasing' | 'either';
  lowerLimit: number | null;
  upperLimit: number | null;
}

/**
 * Organisation-wide rules an admin sets: signature meanings, defaults for analyses, acceptance
 * presets, the report number format and the password policy. Changes are audit events.
 */
export const organisationSettings = pgTable('organisation_settings', {
  organisationId: integer('organisation_id')
    .primaryKey()
    .references(() => organisations.id),
  signatureMeanings: jsonb('signature_meanings')
    .$type<string[]>()
    .notNull()
    .default(['Reviewed', 'Approved']),
  defaultConfidenceLevel: doublePrecision('default_confidence_level').notNull().default(0.95),
  defaultTimeUnit: text('default_time_unit').notNull().default('month'),
  defaultValueUnit: text('default_value_unit').notNull().default('% of label claim'),
  acceptancePresets: jsonb('acceptance_presets').$type<AcceptancePreset[]>().notNull().default([]),
  /** Tokens: {YYYY} year, {NNNN} running number (width = number of N). */
  reportNumberFormat: text('report_number_format').notNull().default('RL-{YYYY}-{NNNN}'),
  passwordMinLength: integer('password_min_length').notNull().default(12),
  passwordRequireMixed: integer('password_require_classes').notNull().default(3),
  /** A template publication or roll back waits for a second admin's approval. */
  templatePublicationNeedsSecondAdmin: boolean('template_publication_needs_second_admin')
    .notNull()
    .default(false),
  updatedAt: updatedAt(),
});

/** A single-use, expiring invitation to join an organisation (only the token's hash is kept). */
export const invitations = pgTable('invitations', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  email: text('email').notNull(),
  fullName: text('full_name').notNull(),
  roles: jsonb('roles').$type<string[]>().notNull(),
  tokenSha256: text('token_sha256').notNull().unique(),
  expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true, mode: 'date' }),
  invitedBy: integer('invited_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
});

/** A single-use, expiring password-reset link (only the token's hash is kept). */
export const passwordResets = pgTable('password_resets', {
  id: serial('id').primaryKey(),
  userId: integer('user_id')
    .notNull()
    .references(() => users.id),
  tokenSha256: text('token_sha256').notNull().unique(),
  expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true, mode: 'date' }),
  requestedBy: integer('requested_by').references(() => users.id),
  createdAt: createdAt(),
});
