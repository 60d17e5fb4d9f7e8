import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor } from '../../platform/db/client.ts';
import {
  inboxReadMarks,
  reportReviews,
  reports,
  reportVersions,
  reviewAssignments,
  signatures,
} from '../../platform/db/schema/index.ts';
import { reviewPath } from '../review/index.ts';

/**
 * What waits for one person, read from the records themselves rather than copied into a table of
 * notifications, so the inbox can never disagree with the review state:
 * - **assigned to me**: versions in review whose current round names me as reviewer and that I
 *   have not signed;
 * - **returned to me**: versions I submitted that the reviewer returned (the comment says why);
 * - **signed**: signatures on the reports I wrote.
 * Only the person's current organisation is read; another organisation's records never appear.
 */
export type InboxKind = 'assigned' | 'returned' | 'signed';

export interface InboxItem {
  kind: InboxKind;
  reportNumber: string;
  reportTitle: string;
  versionNumber: number;
  at: Date;
  /** Who signed and with what meaning (signed), or the reviewer's comment (returned). */
  detail: string | null;
  url: string;
  /** Names the item for its read mark (see `inboxReadMarks`). */
  key: string;
  read: boolean;
}

export interface Inbox {
  assigned: InboxItem[];
  returned: InboxItem[];
  signed: InboxItem[];
}

const ITEM_LIMIT = 50;

export async function inboxOf(db: Executor, person: SessionUser): Promise<Inbox> {
  const version = {
    reportId: reports.id,
    reportNumber: reports.reportNumber,
    reportTitle: reports.title,
    versionNumber: reportVersions.versionNumber,
    versionId: reportVersions.id,
  };
  const assigned = await db
    .select({
      ...version,
      at: reportReviews.submittedAt,
      detail: sql<string | null>`null`,
      tag: reportReviews.round,
    })
    .from(reviewAssignments)
    .innerJoin(reportReviews, eq(reportReviews.reportVersionId, reviewAssignments.reportVersionId))
    .innerJoin(reportVersions, eq(reportVersions.id, reviewAssignments.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .leftJoin(
      signatures,
      and(
        eq(signatures.reportVersionId, reviewAssignments.reportVersionId),
        eq(signatures.signerId, person.id),
      ),
    )
    .where(
      and(
        eq(reviewAssignments.reviewerId, person.id),
        eq(reviewAssignments.round, reportReviews.round),
        eq(reportReviews.state, 'in_review'),
        eq(reportReviews.organisationId, person.organisationId),
        isNull(signatures.id),
      ),
    )
    .orderBy(desc(reportReviews.submittedAt))
    .limit(ITEM_LIMIT);
  const returned = await db
    .select({
      ...version,
      at: reportReviews.updatedAt,
      detail: reportReviews.lastComment,
      tag: reportReviews.round,
    })
    .from(reportReviews)
    .innerJoin(reportVersions, eq(reportVersions.id, reportReviews.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        eq(reportReviews.submittedBy, person.id),
        eq(reportReviews.state, 'returned'),
        eq(reportReviews.organisationId, person.organisationId),
      ),
    )
    .orderBy(desc(reportReviews.updatedAt))
    .limit(ITEM_LIMIT);
  const signed = await db
    .select({
      ...version,
      at: signatures.signedAt,
      detail: sql<string>`${signatures.signerPrintedName} || ' — ' || ${signatures.meaning}`,
      tag: signatures.id,
    })
    .from(signatures)
    .innerJoin(reportVersions, eq(reportVersions.id, signatures.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(and(eq(reports.authorId, person.id), eq(signatures.organisationId, person.organisationId)))
    .orderBy(desc(signatures.signedAt))
    .limit(ITEM_LIMIT);
  const marks = new Set(
    (
      await db
        .select({ key: inboxReadMarks.itemKey })
        .from(inboxReadMarks)
        .where(eq(inboxReadMarks.userId, person.id))
    ).map((mark) => mark.key),
  );
  type Row = { reportId: number; reportNumber: string; reportTitle: string; versionNumber: number };
  type Found = Row & { versionId: number; tag: number; at: Date | null; detail: string | null };
  const items = (kind: InboxKind, rows: Found[]): InboxItem[] =>
    rows.map(({ reportId, versionId, tag, at, ...row }) => {
      const key = kind === 'signed' ? `signed:${tag}` : `${kind}:${versionId}:${tag}`;
      return {
        ...row,
        kind,
        at: at ?? new Date(0),
        url: reviewPath(reportId, row.versionNumber),
        key,
        read: marks.has(key),
      };
    });
  return {
    assigned: items('assigned', assigned),
    returned: items('returned', returned),
    signed: items('signed', signed),
  };
}

/** Items not marked read, all three kinds together (the header's count). */
export const unreadCount = (inbox: Inbox) =>
  [...inbox.assigned, ...inbox.returned, ...inbox.signed].filter((item) => !item.read).length;

export const INBOX_ITEM_KEY = /^(?:(?:assigned|returned):\d{1,10}:\d{1,6}|signed:\d{1,10})$/;

/** Marks one of the person's items read; a mark is the person's own, so a stray key harms nobody. */
export async function markRead(db: Executor, person: SessionUser, itemKey: string): Promise<void> {
  await db.insert(inboxReadMarks).values({ userId: person.id, itemKey }).onConflictDoNothing();
}
