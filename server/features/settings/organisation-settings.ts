import { eq, sql } from 'drizzle-orm';
import {
  DEFAULT_REPORT_NUMBER_FORMAT,
  type OrganisationSettingsInput,
  type SecuritySettingsInput,
} from '../../../shared/api/settings.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { canonicalJson } from '../../platform/audit/canonical-json.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  type AcceptancePreset,
  organisationSettings,
  organisations,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { DEFAULT_PASSWORD_POLICY, type PasswordPolicy } from './password-policy.ts';

/**
 * The organisation's settings as one record: the `organisation_settings` row (which may not exist
 * yet — then the defaults below apply, the same ones the table declares) and the columns of
 * `organisations` that belong here (time zone for reports, account lockout). Every change is one
 * transaction with an audit event holding the changed fields before and after (EU GMP Annex 11
 * §12.3: changes to access authorisations are recorded; 21 CFR 11.10(e)).
 */
export interface OrganisationSettings {
  signatureMeanings: string[];
  defaultConfidenceLevel: number;
  defaultTimeUnit: string;
  defaultValueUnit: string;
  acceptancePresets: AcceptancePreset[];
  reportNumberFormat: string;
  passwordMinLength: number;
  passwordRequireClasses: number;
  timeZone: string;
  lockoutThreshold: number;
  lockoutMinutes: number;
  /** A template publication or roll back waits for a second admin's approval (EU GMP Annex 11 §10). */
  templatePublicationNeedsSecondAdmin: boolean;
}

/** The defaults of `organisation_settings` (server/platform/db/schema/settings.ts) when no row exists. */
export const DEFAULT_ORGANISATION_SETTINGS = {
  signatureMeanings: ['Reviewed', 'Approved'],
  defaultConfidenceLevel: 0.95,
  defaultTimeUnit: 'month',
  defaultValueUnit: '% of label claim',
  acceptancePresets: [] as AcceptancePreset[],
  reportNumberFormat: DEFAULT_REPORT_NUMBER_FORMAT,
  passwordMinLength: DEFAULT_PASSWORD_POLICY.minLength,
  passwordRequireClasses: DEFAULT_PASSWORD_POLICY.requiredClasses,
  templatePublicationNeedsSecondAdmin: false,
} as const;

/** A serialisation lock per organisation for settings and membership changes. */
export const ORGANISATION_ADMIN_LOCK = 7_305_071;

import type { AuditContext } from '../../platform/audit/audit-context.ts';

export type { AuditContext };

export async function loadOrganisationSettings(
  executor: Executor,
  organisationId: number,
): Promise<OrganisationSettings> {
  const [row] = await executor
    .select({ organisation: organisations, settings: organisationSettings })
    .from(organisations)
    .leftJoin(organisationSettings, eq(organisationSettings.organisationId, organisations.id))
    .where(eq(organisations.id, organisationId));
  if (!row) throw new HttpError(404, 'Your organisation was not found.');
  const stored = row.settings;
  return {
    signatureMeanings: stored?.signatureMeanings ?? [...DEFAULT_ORGANISATION_SETTINGS.signatureMeanings],
    defaultConfidenceLevel:
      stored?.defaultConfidenceLevel ?? DEFAULT_ORGANISATION_SETTINGS.defaultConfidenceLevel,
    defaultTimeUnit: stored?.defaultTimeUnit ?? DEFAULT_ORGANISATION_SETTINGS.defaultTimeUnit,
    defaultValueUnit: stored?.defaultValueUnit ?? DEFAULT_ORGANISATION_SETTINGS.defaultValueUnit,
    acceptancePresets: stored?.acceptancePresets ?? [],
    reportNumberFormat: stored?.reportNumberFormat ?? DEFAULT_ORGANISATION_SETTINGS.reportNumberFormat,
    passwordMinLength: stored?.passwordMinLength ?? DEFAULT_ORGANISATION_SETTINGS.passwordMinLength,
    passwordRequireClasses:
      stored?.passwordRequireMixed ?? DEFAULT_ORGANISATION_SETTINGS.passwordRequireClasses,
    timeZone: row.organisation.timeZone,
    lockoutThreshold: row.organisation.lockoutThreshold,
    lockoutMinutes: row.organisation.lockoutMinutes,
    templatePublicationNeedsSecondAdmin:
      stored?.templatePublicationNeedsSecondAdmin ??
      DEFAULT_ORGANISATION_SETTINGS.templatePublicationNeedsSecondAdmin,
  };
}

/** The organisation's password policy (defaults when no settings row exists). */
export async function passwordPolicyOf(executor: Executor, organisationId: number): Promise<PasswordPolicy> {
  const settings = await loadOrganisationSettings(executor, organisationId);
  return { minLength: settings.passwordMinLength, requiredClasses: settings.passwordRequireClasses };
}

type SettingsPatch = Partial<OrganisationSettings>;

/** The fields whose values differ, with both values (canonical JSON: jsonb does not keep key order). */
function differences(before: OrganisationSettings, patch: SettingsPatch) {
  const changed = (Object.keys(patch) as (keyof OrganisationSettings)[]).filter(
    (key) => canonicalJson(before[key]) !== canonicalJson(patch[key]),
  );
  const pick = (source: SettingsPatch) => Object.fromEntries(changed.map((key) => [key, source[key]]));
  return { changed, before: pick(before), after: pick(patch) };
}

async function applyPatch(
  db: Database,
  actor: SessionUser,
  patch: SettingsPatch,
  action: string,
  context: AuditContext,
): Promise<{ changed: string[] }> {
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${ORGANISATION_ADMIN_LOCK}, ${actor.organisationId})`);
    const current = await loadOrganisationSettings(tx, actor.organisationId);
    const diff = differences(current, patch);
    if (diff.changed.length === 0) return { changed: [] };
    const next = { ...current, ...patch };
    const row = {
      signatureMeanings: next.signatureMeanings,
      defaultConfidenceLevel: next.defaultConfidenceLevel,
      defaultTimeUnit: next.defaultTimeUnit,
      defaultValueUnit: next.defaultValueUnit,
      acceptancePresets: next.acceptancePresets,
      reportNumberFormat: next.reportNumberFormat,
      passwordMinLength: next.passwordMinLength,
      passwordRequireMixed: next.passwordRequireClasses,
      templatePublicationNeedsSecondAdmin: next.templatePublicationNeedsSecondAdmin,
      updatedAt: sql`now()` as unknown as Date,
    };
    await tx
      .insert(organisationSettings)
      .values({ organisationId: actor.organisationId, ...row })
      .onConflictDoUpdate({ target: organisationSettings.organisationId, set: row });
    if (
      ['timeZone', 'lockoutThreshold', 'lockoutMinutes'].some((key) => diff.changed.includes(key as never))
    ) {
      await tx
        .update(organisations)
        .set({
          timeZone: next.timeZone,
          lockoutThreshold: next.lockoutThreshold,
          lockoutMinutes: next.lockoutMinutes,
          updatedAt: sql`now()`,
        })
        .where(eq(organisations.id, actor.organisationId));
    }
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action,
      recordType: 'organisation',
      recordId: actor.organisationId,
      before: diff.before,
      after: diff.after,
      context,
    });
    return { changed: diff.changed };
  });
}

/**
 * Saves the organisation settings form; returns the names of the fields that changed. The time
 * zone must also be one PostgreSQL knows (report numbers take their year from the database clock
 * in it): HttpError 400 with the field `timeZone` otherwise.
 */
export async function saveOrganisationSettings(
  db: Database,
  actor: SessionUser,
  input: OrganisationSettingsInput,
  context: AuditContext,
): Promise<{ changed: string[] }> {
  const known = await db.execute<{ known: boolean }>(
    sql`select exists(select 1 from pg_timezone_names where name = ${input.timeZone}) as known`,
  );
  if (!known.rows[0]?.known) {
    const message = `The database does not know the time zone ${input.timeZone}; choose another spelling or a nearby zone.`;
    throw new HttpError(400, message, [{ field: 'timeZone', message }]);
  }
  return applyPatch(
    db,
    actor,
    {
      signatureMeanings: input.signatureMeanings,
      defaultConfidenceLevel: input.defaultConfidenceLevel,
      defaultTimeUnit: input.defaultTimeUnit,
      defaultValueUnit: input.defaultValueUnit,
      acceptancePresets: input.acceptancePresets,
      timeZone: input.timeZone,
      reportNumberFormat: input.reportNumberFormat,
    },
    'organisation-settings.changed',
    context,
  );
}

/** Saves the password policy and the account lockout; returns the names of the fields that changed. */
export function saveSecuritySettings(
  db: Database,
  actor: SessionUser,
  input: SecuritySettingsInput,
  context: AuditContext,
): Promise<{ changed: string[] }> {
  return applyPatch(db, actor, input, 'security-settings.changed', context);
}

/**
 * Turns on or off the rule that a template publication (or roll back) waits for a second admin's
 * approval; returns the names of the fields that changed (the change is an audit event).
 */
export function saveTemplateChangeControl(
  db: Database,
  actor: SessionUser,
  needsSecondAdmin: boolean,
  context: AuditContext,
): Promise<{ changed: string[] }> {
  return applyPatch(
    db,
    actor,
    { templatePublicationNeedsSecondAdmin: needsSecondAdmin },
    'template-change-control.changed',
    context,
  );
}
