import { and, asc, eq, inArray, or, sql } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { auditEvents, reportVersions } from '../../platform/db/schema/index.ts';
import { isoDateTime } from '../reports/index.ts';
import { auditEventInWords } from './audit-plain-words.ts';
import { eventsOfRecord, type RecordUnderReview } from './record-stamp.ts';

/**
 * The audit trail of the record under review, for the reviewer to read before signing (FDA,
 * "Data Integrity and Compliance With Drug CGMP: Questions and Answers", 2018: audit trails that
 * capture changes to critical data are reviewed with each record and before its final approval;
 * paraphrased from memory). The record is the version and everything it rests on: the report,
 * the analysis run, its dataset, the original file and the study.
 *
 * Since when: the later of the last signature of an earlier version of this report and the end
 * (the return) of this version's previous review round; without either, the whole history. Reads
 * only.
 */

export interface ReviewAuditEntry {
  id: number;
  whenText: string;
  who: string;
  action: string;
  words: string;
}

export interface ReviewAuditTrail {
  /** Where the entries start, in words. */
  since: string;
  entries: ReviewAuditEntry[];
}

/** The id of the event after which the entries start, with the words for it; 0 for the whole history. */
async function windowStart(db: Executor, record: RecordUnderReview, timeZone: string) {
  const earlier = await db
    .select({ id: reportVersions.id, number: reportVersions.versionNumber })
    .from(reportVersions)
    .where(
      and(
        eq(reportVersions.reportId, record.reportId),
        sql`${reportVersions.versionNumber} < ${record.versionNumber}`,
      ),
    );
  const signedEarlier = earlier.length
    ? and(
        eq(auditEvents.action, 'report.signed'),
        eq(auditEvents.recordType, 'report_version'),
        inArray(
          auditEvents.recordId,
          earlier.map((version) => String(version.id)),
        ),
      )
    : undefined;
  const returnedBefore = and(
    eq(auditEvents.action, 'review.returned'),
    eq(auditEvents.recordType, 'report_version'),
    eq(auditEvents.recordId, String(record.versionId)),
  );
  const [last] = await db
    .select({
      id: auditEvents.id,
      action: auditEvents.action,
      at: auditEvents.occurredAt,
      after: auditEvents.afterValue,
    })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.organisationId, record.organisationId),
        signedEarlier ? or(signedEarlier, returnedBefore) : returnedBefore,
      ),
    )
    .orderBy(sql`${auditEvents.id} desc`)
    .limit(1);
  if (!last)
    return {
      afterId: 0,
      since: 'The whole history of this record: it has no earlier signature or review round.',
    };
  const after = (last.after ?? {}) as { versionNumber?: number; round?: number };
  const when = isoDateTime(last.at, timeZone);
  return {
    afterId: last.id,
    since:
      last.action === 'report.signed'
        ? `Since version ${after.versionNumber ?? ''} of this report was signed (${when}).`
        : `Since review round ${after.round ?? ''} ended with a return to the author (${when}).`,
  };
}

/** The record's audit entries since the last signature or review round, oldest first, in plain words. */
export async function reviewAuditTrail(
  db: Executor,
  record: RecordUnderReview,
  timeZone: string,
): Promise<ReviewAuditTrail> {
  const start = await windowStart(db, record, timeZone);
  const rows = await db
    .select()
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.organisationId, record.organisationId),
        sql`${auditEvents.id} > ${start.afterId}`,
        eventsOfRecord(record),
      ),
    )
    .orderBy(asc(auditEvents.id));
  return {
    since: start.since,
    entries: rows.map((row) => ({
      id: row.id,
      whenText: isoDateTime(row.occurredAt, timeZone),
      who: row.actorLabel,
      action: row.action,
      words: auditEventInWords({
        action: row.action,
        recordType: row.recordType,
        recordId: row.recordId,
        before: row.beforeValue,
        after: row.afterValue,
      }),
    })),
  };
}
