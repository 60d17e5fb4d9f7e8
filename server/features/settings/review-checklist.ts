import { and, desc, eq, sql } from 'drizzle-orm';
import type { ReviewChecklist, ReviewChecklistInput } from '../../../shared/api/review-checklist.ts';
import type { AuditContext } from '../../platform/audit/audit-context.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import { reviewChecklists } from '../../platform/db/schema/index.ts';
import { ORGANISATION_ADMIN_LOCK } from './organisation-settings.ts';

/**
 * The review checklist an organisation's admins keep: the points a reviewer confirms before
 * signing (Rateledger issue 13 §4). Each save is a new write-once version with the reason for the
 * change and an audit event holding the items before and after (21 CFR 11.10(e); EU GMP Annex 11
 * §10: changes made in a controlled manner). The current checklist is the newest version; an empty
 * list means none. A signature copies the items it confirmed (`signatures.checklist_confirmed`).
 */

export const NO_CHECKLIST: ReviewChecklist = { versionId: null, versionNumber: null, items: [] };

/** The organisation's current checklist: its newest version, or `NO_CHECKLIST` before the first. */
export async function currentReviewChecklist(
  executor: Executor,
  organisationId: number,
): Promise<ReviewChecklist> {
  const [row] = await executor
    .select()
    .from(reviewChecklists)
    .where(eq(reviewChecklists.organisationId, organisationId))
    .orderBy(desc(reviewChecklists.versionNumber))
    .limit(1);
  return row ? { versionId: row.id, versionNumber: row.versionNumber, items: row.items } : NO_CHECKLIST;
}

/** The items of one of the organisation's checklist versions (empty when there is no such version). */
export async function reviewChecklistItems(
  executor: Executor,
  organisationId: number,
  versionId: number,
): Promise<string[]> {
  const [row] = await executor
    .select({ items: reviewChecklists.items })
    .from(reviewChecklists)
    .where(and(eq(reviewChecklists.id, versionId), eq(reviewChecklists.organisationId, organisationId)));
  return row?.items ?? [];
}

/**
 * Saves the checklist as a new version when its items differ from the current ones; returns the
 * new version's number, or null when nothing had changed (then nothing is stored).
 */
export async function saveReviewChecklist(
  db: Database,
  actor: SessionUser,
  input: ReviewChecklistInput,
  context: AuditContext,
): Promise<{ versionNumber: number | null }> {
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${ORGANISATION_ADMIN_LOCK}, ${actor.organisationId})`);
    const current = await currentReviewChecklist(tx, actor.organisationId);
    const same =
      current.items.length === input.items.length &&
      current.items.every((item, index) => item === input.items[index]);
    if (same) return { versionNumber: null };
    const versionNumber = (current.versionNumber ?? 0) + 1;
    const [row] = await tx
      .insert(reviewChecklists)
      .values({
        organisationId: actor.organisationId,
        versionNumber,
        items: input.items,
        reason: input.reason,
        createdBy: actor.id,
      })
      .returning({ id: reviewChecklists.id });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'review-checklist.changed',
      recordType: 'review_checklist',
      recordId: row!.id,
      before: { versionNumber: current.versionNumber, items: current.items },
      after: { versionNumber, items: input.items, reason: input.reason },
      context,
    });
    return { versionNumber };
  });
}
