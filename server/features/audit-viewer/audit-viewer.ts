/**
 * The audit trail viewer: the events of one organisation, filtered, a page at a time, and the
 * check of the hash chain.
 *
 * Visibility rule: a caller sees the events whose `organisation_id` is their organisation. Events
 * recorded for no organisation (a sign-in attempt with an e-mail address no account has) and
 * events of other organisations stay in the one global chain — the chain check recomputes every
 * hash, theirs included — but are never listed, exported or linked here.
 *
 * Dates of the filter are calendar days in the organisation's time zone; PostgreSQL turns each day
 * into its start instant there (`day::timestamp AT TIME ZONE zone`), so days across a daylight
 * saving change have their true 23 or 25 hours. Pages are newest first by id — ids are assigned
 * under the chain's lock, so id order is chain order and no two events tie.
 */
import { and, count, desc, eq, gte, ilike, lt, type SQL, sql } from 'drizzle-orm';
import { AUDIT_PAGE_SIZE, type AuditFilter } from '../../../shared/api/audit.ts';
import { isKnownTimeZone, wallClockWithOffset } from '../../../shared/time/zoned-time.ts';
import { type AuditAnchor, configuredAuditAnchor } from '../../platform/audit/audit-anchor.ts';
import { GENESIS_HASH } from '../../platform/audit/audit-hash.ts';
import { checkAuditTrail } from '../../platform/audit/audit-trail-check.ts';
import {
  type OrganisationChainResult,
  organisationChainResult,
} from '../../platform/audit/organisation-chain-result.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import { auditEvents, organisations, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { listPeople } from '../people/index.ts';
import { CHAIN_CHECKED_ACTION, recordChainCheck } from './chain-check-jobs.ts';

export { CHAIN_CHECKED_ACTION };

export const AUDIT_EXPORTED_ACTION = 'audit.exported';
const FALLBACK_TIME_ZONE = 'UTC';

export interface AuditOrganisation {
  id: number;
  name: string;
  slug: string;
  /** The organisation's IANA zone, or UTC when the stored name is not one this server knows. */
  timeZone: string;
  timeZoneProblem: string | null;
}

/** The caller's organisation with a time zone both PostgreSQL and the formatter will accept. */
export async function auditOrganisation(db: Executor, organisationId: number): Promise<AuditOrganisation> {
  const [row] = await db.select().from(organisations).where(eq(organisations.id, organisationId));
  if (!row) throw new HttpError(404, 'Your organisation was not found.');
  const known = await db.execute<{ known: boolean }>(
    sql`select exists(select 1 from pg_timezone_names where name = ${row.timeZone}) as known`,
  );
  const valid = known.rows[0]?.known === true && isKnownTimeZone(row.timeZone);
  return {
    id: row.id,
    name: row.name,
    slug: row.slug,
    timeZone: valid ? row.timeZone : FALLBACK_TIME_ZONE,
    timeZoneProblem: valid
      ? null
      : `The organisation's time zone "${row.timeZone}" is not a known IANA zone; times are shown in UTC until an administrator corrects it.`,
  };
}

/** `\`, `%` and `_` stand for themselves in the actor text, not for LIKE wildcards. */
const likeLiteral = (text: string) => text.replace(/[\\%_]/g, (character) => `\\${character}`);

/** The SQL condition of a filter, always scoped to the organisation. */
export function auditConditions(organisationId: number, filter: AuditFilter, timeZone: string): SQL {
  const conditions: SQL[] = [eq(auditEvents.organisationId, organisationId)];
  if (filter.user !== undefined) conditions.push(eq(auditEvents.actorUserId, filter.user));
  if (filter.actor) conditions.push(ilike(auditEvents.actorLabel, `%${likeLiteral(filter.actor)}%`));
  if (filter.action) conditions.push(eq(auditEvents.action, filter.action));
  if (filter.recordType) conditions.push(eq(auditEvents.recordType, filter.recordType));
  if (filter.recordId) conditions.push(eq(auditEvents.recordId, filter.recordId));
  if (filter.from) {
    conditions.push(
      gte(auditEvents.occurredAt, sql`(${filter.from}::date)::timestamp at time zone ${timeZone}`),
    );
  }
  if (filter.to) {
    conditions.push(
      lt(auditEvents.occurredAt, sql`((${filter.to}::date + 1)::timestamp) at time zone ${timeZone}`),
    );
  }
  return and(...conditions)!;
}

const eventColumns = {
  id: auditEvents.id,
  occurredAt: auditEvents.occurredAt,
  actorUserId: auditEvents.actorUserId,
  actorName: users.fullName,
  actorLabel: auditEvents.actorLabel,
  action: auditEvents.action,
  recordType: auditEvents.recordType,
  recordId: auditEvents.recordId,
  beforeValue: auditEvents.beforeValue,
  afterValue: auditEvents.afterValue,
  context: auditEvents.context,
  previousHash: auditEvents.previousHash,
  hash: auditEvents.hash,
};

/** One event as the viewer reads it: the stored row (schema-inferred) with the actor's current name. */
export type AuditEventRow = Omit<typeof auditEvents.$inferSelect, 'organisationId'> & {
  actorName: (typeof users.$inferSelect)['fullName'] | null;
};

export interface AuditPage {
  events: AuditEventRow[];
  total: number;
  page: number;
  pageCount: number;
}

/** One page of the filtered events, newest first, with the total count of the filter. */
export async function listAuditEvents(
  db: Executor,
  organisationId: number,
  filter: AuditFilter,
  timeZone: string,
): Promise<AuditPage> {
  const where = auditConditions(organisationId, filter, timeZone);
  const [totals] = await db.select({ total: count() }).from(auditEvents).where(where);
  const total = totals?.total ?? 0;
  const events = await db
    .select(eventColumns)
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorUserId))
    .where(where)
    .orderBy(desc(auditEvents.id))
    .limit(AUDIT_PAGE_SIZE)
    .offset((filter.page - 1) * AUDIT_PAGE_SIZE);
  return { events, total, page: filter.page, pageCount: Math.max(1, Math.ceil(total / AUDIT_PAGE_SIZE)) };
}

/** One event of the organisation, or null when it does not exist or belongs elsewhere. */
export async function findAuditEvent(
  db: Executor,
  organisationId: number,
  eventId: number,
): Promise<AuditEventRow | null> {
  const [row] = await db
    .select(eventColumns)
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorUserId))
    .where(and(eq(auditEvents.id, eventId), eq(auditEvents.organisationId, organisationId)));
  return row ?? null;
}

/** What the filter's selects offer: the organisation's people and the actions and record types used. */
export async function auditFilterChoices(db: Executor, organisationId: number) {
  const ofOrganisation = eq(auditEvents.organisationId, organisationId);
  const [people, actions, recordTypes] = await Promise.all([
    listPeople(db as Database, organisationId),
    db
      .selectDistinct({ action: auditEvents.action })
      .from(auditEvents)
      .where(ofOrganisation)
      .orderBy(auditEvents.action),
    db
      .selectDistinct({ recordType: auditEvents.recordType })
      .from(auditEvents)
      .where(and(ofOrganisation, sql`${auditEvents.recordType} is not null`))
      .orderBy(auditEvents.recordType),
  ]);
  return {
    people: people.map((person) => ({ id: person.id, fullName: person.fullName, email: person.email })),
    actions: actions.map((row) => row.action),
    recordTypes: recordTypes.map((row) => row.recordType!),
  };
}

export interface ChainCheckOutcome extends OrganisationChainResult {
  /** The `audit.chain-checked` event that records this check. */
  eventId: number;
}

/**
 * Checks the whole chain against itself and the checkpoints outside the database, and records
 * the caller's organisation's own result (its events, its findings) as an audit event of that
 * organisation. Accepts a transaction, so a check can see (and be rolled back with) rows changed
 * inside it.
 */
export async function checkAuditChain(
  executor: Executor,
  actor: SessionUser,
  context: Record<string, unknown>,
  anchor: AuditAnchor = configuredAuditAnchor(),
): Promise<ChainCheckOutcome> {
  const check = organisationChainResult(await checkAuditTrail(executor, anchor), actor.organisationId);
  const { id } = await recordChainCheck(executor, actor, check, context);
  return { ...check, eventId: id };
}

/** The organisation's latest recorded chain checks, newest first. */
export async function recentChainChecks(db: Executor, organisationId: number, limit = 10) {
  return db
    .select(eventColumns)
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorUserId))
    .where(and(eq(auditEvents.organisationId, organisationId), eq(auditEvents.action, CHAIN_CHECKED_ACTION)))
    .orderBy(desc(auditEvents.id))
    .limit(limit);
}

/** The newest event id in the whole trail: the export's fixed upper end. */
export async function lastAuditEventId(db: Executor): Promise<number> {
  const [row] = await db.select({ last: sql<string | null>`max(${auditEvents.id})` }).from(auditEvents);
  return Number(row?.last ?? 0);
}

// ——— How an event reads on the page ———

const HASH_SHOWN = 12;
/** An instant on the organisation's clock with its offset (`wallClockWithOffset`, shared/time). */
export const zonedTime = wallClockWithOffset;

export interface DiffLine {
  key: string;
  before: string | null;
  after: string | null;
  status: 'changed' | 'added' | 'removed' | 'same';
}

/**
 * Before and after values side by side, key by key (sorted), each value pretty-printed JSON, so a
 * changed field stands out (short values on one line, longer ones indented). `shape` says which sides exist: an event that only records values
 * (`before` null) is `after-only`, not a list of "added" keys. A value that is not an object
 * (a list, a number, a string) is one line keyed `(value)`.
 * Example: `valueDiff({ unit: '%' , title: 'A' }, { unit: 'mg', title: 'A' })` → shape `both`,
 * lines `title` same, `unit` changed (`"%"` → `"mg"`).
 */
export function valueDiff(before: unknown, after: unknown) {
  const hasBefore = before !== null && before !== undefined;
  const hasAfter = after !== null && after !== undefined;
  const shape = hasBefore && hasAfter ? 'both' : hasAfter ? 'after-only' : hasBefore ? 'before-only' : 'none';
  const asFields = (value: unknown): Map<string, unknown> =>
    value !== null && typeof value === 'object' && !Array.isArray(value)
      ? new Map(Object.entries(value as Record<string, unknown>))
      : new Map(value === null || value === undefined ? [] : [['(value)', value]]);
  const beforeFields = asFields(before);
  const afterFields = asFields(after);
  const keys = [...new Set([...beforeFields.keys(), ...afterFields.keys()])].sort();
  const pretty = (fields: Map<string, unknown>, key: string) =>
    fields.has(key) ? readableJson(fields.get(key)) : null;
  const lines: DiffLine[] = keys.map((key) => {
    const left = pretty(beforeFields, key);
    const right = pretty(afterFields, key);
    const status = left === right ? 'same' : left === null ? 'added' : right === null ? 'removed' : 'changed';
    return { key, before: left, after: right, status: shape === 'both' ? status : 'same' };
  });
  return { shape, lines, changedCount: lines.filter((line) => line.status !== 'same').length };
}

/** Values that fit on a short line are printed on one (`["CV-101","CV-102"]`); longer ones indented. */
const SHORT_JSON = 40;
const readableJson = (value: unknown) => {
  const compact = JSON.stringify(value);
  return compact.length <= SHORT_JSON ? compact : JSON.stringify(value, null, 2);
};

const abbreviate = (hash: string) =>
  hash === GENESIS_HASH ? 'start of chain' : `${hash.slice(0, HASH_SHOWN)}…`;

/** An event as the page shows it: time in the organisation's zone, who, what, which record, values. */
export function auditEventView(row: AuditEventRow, timeZone: string) {
  return {
    id: row.id,
    time: zonedTime(row.occurredAt, timeZone),
    timeUtc: row.occurredAt.toISOString(),
    actorName: row.actorName,
    actorLabel: row.actorLabel,
    actorUserId: row.actorUserId,
    action: row.action,
    recordType: row.recordType,
    recordId: row.recordId,
    recordHistoryHref:
      row.recordType && row.recordId
        ? `/audit?${new URLSearchParams({ recordType: row.recordType, recordId: row.recordId })}`
        : null,
    diff: valueDiff(row.beforeValue, row.afterValue),
    context: row.context === null || row.context === undefined ? null : JSON.stringify(row.context, null, 2),
    hash: row.hash,
    hashShort: abbreviate(row.hash),
    previousHash: row.previousHash,
    previousHashShort: abbreviate(row.previousHash),
  };
}
