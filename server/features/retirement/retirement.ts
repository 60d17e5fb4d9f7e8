/**
 * Retiring a dataset, an analysis run or a draft report made by mistake.
 *
 * Nothing is deleted or changed: the record stays write-once as it was, with everything that
 * refers to it, and the retirement is a row of its own (`retirements`, write-once, one per record)
 * with the reason, plus an audit event in the same transaction (21 CFR 11.10(e); ALCOA+
 * "enduring"). A retired record is left out of the default lists and shown when "include retired"
 * is chosen; its own page says it is retired, why, when and by whom.
 *
 * Who: the analyst who made the record, or an admin of its organisation. A signed record cannot be
 * retired, nor one in review (a reviewer is acting on it), nor an analysis or dataset that a
 * signed or in-review report version was made from: those stand as part of a signed record.
 * Another organisation's record is "not found".
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { AuditContext } from '../../platform/audit/audit-context.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  analysisRuns,
  datasets,
  reportReviews,
  reports,
  reportVersions,
  retirements,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';

export const RETIRABLE_TYPES = ['dataset', 'analysis_run', 'report'] as const;
export type RetirableType = (typeof RETIRABLE_TYPES)[number];

const NOUN: Record<RetirableType, string> = {
  dataset: 'dataset',
  analysis_run: 'analysis',
  report: 'report',
};

export interface RetirableRecord {
  type: RetirableType;
  id: number;
  label: string;
  ownerId: number;
  /** Where the record is shown. */
  url: string;
}

/** The record in this organisation, or 404. */
export async function findRetirable(
  db: Executor,
  organisationId: number,
  type: RetirableType,
  id: number,
): Promise<RetirableRecord> {
  const missing = () => new HttpError(404, `There is no ${NOUN[type]} ${id} in your organisation.`);
  if (type === 'dataset') {
    const [row] = await db
      .select({ ownerId: datasets.createdBy, studyId: datasets.studyId })
      .from(datasets)
      .where(and(eq(datasets.id, id), eq(datasets.organisationId, organisationId)));
    if (!row) throw missing();
    return { type, id, label: `Dataset #${id}`, ownerId: row.ownerId, url: `/studies/${row.studyId}` };
  }
  if (type === 'analysis_run') {
    const [row] = await db
      .select({ ownerId: analysisRuns.runBy })
      .from(analysisRuns)
      .where(and(eq(analysisRuns.id, id), eq(analysisRuns.organisationId, organisationId)));
    if (!row) throw missing();
    return { type, id, label: `Analysis #${id}`, ownerId: row.ownerId, url: `/analyses/${id}` };
  }
  const [row] = await db
    .select({ ownerId: reports.authorId, number: reports.reportNumber })
    .from(reports)
    .where(and(eq(reports.id, id), eq(reports.organisationId, organisationId)));
  if (!row) throw missing();
  return { type, id, label: `Report ${row.number}`, ownerId: row.ownerId, url: `/app/reports/${id}` };
}

/** May this person retire the record? The analyst who made it, or an admin. */
export function mayRetire(actor: SessionUser, record: RetirableRecord): boolean {
  return actor.roles.includes('admin') || (actor.roles.includes('analyst') && actor.id === record.ownerId);
}

/** The report versions the record stands behind: its own, or those made from it. */
function versionsBehind(type: RetirableType, id: number) {
  if (type === 'report') return sql`select id from report_versions where report_id = ${id}`;
  if (type === 'analysis_run')
    return sql`select v.id from report_versions v join reports r on r.id = v.report_id
      where v.analysis_run_id = ${id} or r.analysis_run_id = ${id}`;
  return sql`select v.id from report_versions v join reports r on r.id = v.report_id
    join analysis_runs a on a.id = v.analysis_run_id or a.id = r.analysis_run_id where a.dataset_id = ${id}`;
}

async function assertNotSigned(tx: Executor, record: RetirableRecord): Promise<void> {
  const standing = await tx
    .select({
      state: reportReviews.state,
      reportNumber: reports.reportNumber,
      version: reportVersions.versionNumber,
    })
    .from(reportReviews)
    .innerJoin(reportVersions, eq(reportVersions.id, reportReviews.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        inArray(reportReviews.state, ['signed', 'in_review']),
        sql`${reportReviews.reportVersionId} in (${versionsBehind(record.type, record.id)})`,
      ),
    )
    .limit(1);
  const [blocking] = standing;
  if (!blocking) return;
  const which =
    record.type === 'report'
      ? `version ${blocking.version}`
      : `report ${blocking.reportNumber} version ${blocking.version}, made from it,`;
  throw new HttpError(
    409,
    blocking.state === 'signed'
      ? `${record.label} cannot be retired: ${which} is signed. A signed record stands as it is; a correction is a new version with its own review.`
      : `${record.label} cannot be retired while ${which} is in review; have it returned first.`,
  );
}

export interface Retirement {
  reason: string;
  retiredAt: Date;
  retiredBy: string;
}

/** The record's retirement, or null while it is current. */
export async function retirementOf(
  db: Executor,
  organisationId: number,
  type: RetirableType,
  id: number,
): Promise<Retirement | null> {
  const [row] = await db
    .select({ reason: retirements.reason, retiredAt: retirements.retiredAt, retiredBy: users.fullName })
    .from(retirements)
    .innerJoin(users, eq(users.id, retirements.retiredBy))
    .where(
      and(
        eq(retirements.organisationId, organisationId),
        eq(retirements.recordType, type),
        eq(retirements.recordId, id),
      ),
    );
  return row ?? null;
}

/** This organisation's retired records of one type, by record id. */
export async function retirementsOf(
  db: Executor,
  organisationId: number,
  type: RetirableType,
): Promise<Map<number, Retirement>> {
  const rows = await db
    .select({
      id: retirements.recordId,
      reason: retirements.reason,
      retiredAt: retirements.retiredAt,
      retiredBy: users.fullName,
    })
    .from(retirements)
    .innerJoin(users, eq(users.id, retirements.retiredBy))
    .where(and(eq(retirements.organisationId, organisationId), eq(retirements.recordType, type)));
  return new Map(rows.map(({ id, ...retirement }) => [id, retirement]));
}

/** Retires the record: the checks above, then the retirement row and its audit event together. */
export async function retireRecord(
  db: Database,
  actor: SessionUser,
  input: { type: RetirableType; id: number; reason: string },
  context: AuditContext,
): Promise<RetirableRecord & Retirement> {
  const reason = input.reason.trim();
  return db.transaction(async (tx) => {
    const record = await findRetirable(tx, actor.organisationId, input.type, input.id);
    if (!mayRetire(actor, record))
      throw new HttpError(
        403,
        `Only the analyst who made ${record.label.toLowerCase()} or an admin can retire it.`,
      );
    if (reason === '') {
      const message = 'Give the reason for retiring it; it is kept with the record.';
      throw new HttpError(400, message, [{ field: 'reason', message }]);
    }
    // One retirement at a time per record: the unique key refuses a second one in any case.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`retire:${input.type}`}), ${input.id})`);
    const earlier = await retirementOf(tx, actor.organisationId, input.type, input.id);
    if (earlier) {
      throw new HttpError(
        409,
        `${record.label} was already retired on ${earlier.retiredAt.toISOString().slice(0, 10)} by ${earlier.retiredBy}.`,
      );
    }
    await assertNotSigned(tx, record);
    const [row] = await tx
      .insert(retirements)
      .values({
        organisationId: actor.organisationId,
        recordType: input.type,
        recordId: input.id,
        reason,
        retiredBy: actor.id,
      })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: `${input.type === 'analysis_run' ? 'analysis' : input.type}.retired`,
      recordType: input.type,
      recordId: input.id,
      before: null,
      after: { retired: true, reason, retirementId: row!.id },
      context,
    });
    return { ...record, reason, retiredAt: row!.retiredAt, retiredBy: actor.fullName };
  });
}

/** Refuses (409) new work built on a retired record: an analysis of a retired dataset, a report of a retired analysis. */
export async function assertNotRetired(
  db: Executor,
  organisationId: number,
  type: RetirableType,
  id: number,
): Promise<void> {
  const retirement = await retirementOf(db, organisationId, type, id);
  if (!retirement) return;
  const label =
    type === 'dataset' ? `Dataset #${id}` : type === 'analysis_run' ? `Analysis #${id}` : `Report ${id}`;
  throw new HttpError(
    409,
    `${label} was retired on ${retirement.retiredAt.toISOString().slice(0, 10)} by ${retirement.retiredBy} (${retirement.reason}); nothing new is built on it.`,
  );
}
