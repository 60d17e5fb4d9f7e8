/**
 * Chain checks as a background job, for trails too large to check inside a request.
 *
 * `POST /audit/chain` checks in the request while the trail holds at most
 * `AUDIT_CHECK_IN_REQUEST_MAX_EVENTS` events (20,000 by default); beyond that it records a row of
 * `audit_chain_checks` and sends a job on the `audit-chain-check` queue. The worker reads the
 * whole chain exactly as the request would (`checkAuditTrail`), writing the number of events read
 * to the row every `AUDIT_CHECK_PROGRESS_EVERY` events (5,000) so the page can show how far it
 * has come, then records the organisation's own result as the `audit.chain-checked` event and
 * marks the row done, both in one transaction. The row lives in PostgreSQL, so any app instance
 * shows the progress and a restart loses nothing (pg-boss runs a lost check again).
 */
import { and, eq, sql } from 'drizzle-orm';
import { z } from 'zod';
import { type AuditAnchor, configuredAuditAnchor } from '../../platform/audit/audit-anchor.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { checkAuditTrail } from '../../platform/audit/audit-trail-check.ts';
import {
  type OrganisationChainResult,
  organisationChainResult,
} from '../../platform/audit/organisation-chain-result.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database } from '../../platform/db/client.ts';
import { auditChainChecks, users } from '../../platform/db/schema/index.ts';
import type { ChainCheckQueue } from './chain-check-queue.ts';

export const CHAIN_CHECKED_ACTION = 'audit.chain-checked';

const jobSettingsSchema = z.object({
  AUDIT_CHECK_IN_REQUEST_MAX_EVENTS: z.coerce.number().int().min(0).default(20_000),
  AUDIT_CHECK_PROGRESS_EVERY: z.coerce.number().int().min(1).default(5_000),
});

export interface ChainCheckJobSettings {
  /** A trail with more events than this is checked in the background. */
  inRequestMaxEvents: number;
  /** Events read between two progress writes. */
  progressEvery: number;
}

export function parseChainCheckJobSettings(source: NodeJS.ProcessEnv = process.env): ChainCheckJobSettings {
  const result = jobSettingsSchema.safeParse(source);
  if (!result.success) {
    const problems = result.error.issues.map((issue) => `  ${issue.path.join('.')}: ${issue.message}`);
    throw new Error(`Rateledger cannot check the audit chain; fix the environment:\n${problems.join('\n')}`);
  }
  return {
    inRequestMaxEvents: result.data.AUDIT_CHECK_IN_REQUEST_MAX_EVENTS,
    progressEvery: result.data.AUDIT_CHECK_PROGRESS_EVERY,
  };
}

export type ChainCheckRow = typeof auditChainChecks.$inferSelect;

/** Records a check to run in the background and queues it; returns the row's id. */
export async function requestChainCheck(
  db: Database,
  queue: ChainCheckQueue,
  actor: SessionUser,
  context: Record<string, unknown>,
  eventsExpected: number,
): Promise<number> {
  const [row] = await db
    .insert(auditChainChecks)
    .values({ organisationId: actor.organisationId, requestedBy: actor.id, eventsExpected, context })
    .returning({ id: auditChainChecks.id });
  try {
    await queue.send({ checkId: row!.id });
  } catch (error) {
    await db
      .update(auditChainChecks)
      .set({ status: 'failed', failure: 'the check could not be queued', finishedAt: sql`now()` })
      .where(eq(auditChainChecks.id, row!.id));
    throw error;
  }
  return row!.id;
}

/** The check `checkId` of the organisation, or null when it is not one of its own. */
export async function findChainCheck(
  db: Database,
  organisationId: number,
  checkId: number,
): Promise<ChainCheckRow | null> {
  const [row] = await db
    .select()
    .from(auditChainChecks)
    .where(and(eq(auditChainChecks.id, checkId), eq(auditChainChecks.organisationId, organisationId)));
  return row ?? null;
}

/**
 * Runs one queued check (the job's handler). A check already done is left alone (a job delivered
 * twice); a failure is written to the row and thrown, so pg-boss tries again.
 */
export async function runChainCheck(
  db: Database,
  checkId: number,
  anchor: AuditAnchor = configuredAuditAnchor(),
  settings: ChainCheckJobSettings = parseChainCheckJobSettings(),
): Promise<ChainCheckRow | null> {
  const [row] = await db.select().from(auditChainChecks).where(eq(auditChainChecks.id, checkId));
  if (!row || row.status === 'done') return row ?? null;
  const progress = (eventsScanned: number) =>
    db
      .update(auditChainChecks)
      .set({ eventsScanned, progressAt: sql`clock_timestamp()` })
      .where(eq(auditChainChecks.id, checkId))
      .then(() => undefined);
  await db
    .update(auditChainChecks)
    .set({ status: 'running', startedAt: sql`now()`, eventsScanned: 0, failure: null })
    .where(eq(auditChainChecks.id, checkId));
  try {
    const trail = await checkAuditTrail(db, anchor, progress, settings.progressEvery);
    const result = organisationChainResult(trail, row.organisationId);
    const [actor] = await db.select({ email: users.email }).from(users).where(eq(users.id, row.requestedBy));
    return await db.transaction(async (tx) => {
      const { id } = await recordChainCheck(
        tx,
        {
          organisationId: row.organisationId,
          id: row.requestedBy,
          email: actor?.email ?? `user ${row.requestedBy}`,
        },
        result,
        row.context as Record<string, unknown>,
      );
      const [done] = await tx
        .update(auditChainChecks)
        .set({
          status: 'done',
          eventsScanned: trail.eventsScanned,
          finishedAt: sql`now()`,
          outcomeEventId: id,
        })
        .where(eq(auditChainChecks.id, checkId))
        .returning();
      return done ?? null;
    });
  } catch (error) {
    await db
      .update(auditChainChecks)
      .set({ status: 'failed', failure: (error as Error).message, finishedAt: sql`now()` })
      .where(eq(auditChainChecks.id, checkId));
    throw error;
  }
}

/** Records an organisation's chain result as an audit event of that organisation. */
export async function recordChainCheck(
  executor: Parameters<typeof appendAuditEvent>[0],
  actor: Pick<SessionUser, 'id' | 'email' | 'organisationId'>,
  result: OrganisationChainResult,
  context: Record<string, unknown>,
): Promise<{ id: number }> {
  return appendAuditEvent(executor, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: CHAIN_CHECKED_ACTION,
    after: result,
    context,
  });
}

/** How a running check reads on the page. */
export function chainCheckProgressView(row: ChainCheckRow) {
  const expected = Math.max(row.eventsExpected, row.eventsScanned, 1);
  return {
    id: row.id,
    status: row.status,
    queued: row.status === 'queued',
    running: row.status === 'running',
    failed: row.status === 'failed',
    failure: row.failure,
    eventsScanned: row.eventsScanned,
    eventsExpected: row.eventsExpected,
    percent: Math.min(100, Math.floor((100 * row.eventsScanned) / expected)),
  };
}
