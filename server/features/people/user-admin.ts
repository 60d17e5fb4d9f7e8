import { and, asc, desc, eq, inArray, ne, sql } from 'drizzle-orm';
import type { MemberRole } from '../../../shared/api/user-admin.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Role, SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Transaction } from '../../platform/db/client.ts';
import { auditEvents, memberships, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { type AuditContext, ORGANISATION_ADMIN_LOCK } from '../settings/index.ts';

/**
 * People and roles of one organisation, as an administrator manages them: roles per organisation,
 * deactivation and reactivation, unlocking a locked account. Accounts are never deleted — their
 * records and signatures stay attributable, and an identification code is never issued to someone
 * else (21 CFR 11.100(a), 11.300(a)). Each change is one transaction, serialised per organisation,
 * with an audit event holding the values before and after (EU GMP Annex 11 §12.3). The
 * organisation always keeps at least one active administrator.
 *
 * Deactivation is of the account (`users.active`), so it applies in every organisation the person
 * belongs to; the person's page says so when they belong to another. Sessions reload the user on
 * every request, so a deactivated person's open sessions stop working at their next request.
 */

export interface Member {
  id: number;
  fullName: string;
  email: string;
  active: boolean;
  lastSignInAt: Date | null;
  lockedUntil: Date | null;
  /** Locked now, by the database clock. */
  locked: boolean;
  failedSignInCount: number;
  createdAt: Date;
  roles: Role[];
  /** Other organisations this account belongs to. */
  otherOrganisations: number;
}

const ROLE_ORDER: readonly Role[] = ['analyst', 'reviewer', 'admin'];

async function membersWhere(db: Database | Transaction, organisationId: number, userId?: number) {
  const rows = await db
    .select({
      id: users.id,
      fullName: users.fullName,
      email: users.email,
      active: users.active,
      lastSignInAt: users.lastSignInAt,
      lockedUntil: users.lockedUntil,
      locked: sql<boolean>`coalesce(${users.lockedUntil} > now(), false)`,
      failedSignInCount: users.failedSignInCount,
      createdAt: users.createdAt,
      role: memberships.role,
      otherOrganisations: sql<number>`(select count(distinct m2.organisation_id)::int from memberships m2
        where m2.user_id = ${users.id} and m2.organisation_id <> ${organisationId})`,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, organisationId),
        userId === undefined ? undefined : eq(users.id, userId),
      ),
    )
    .orderBy(asc(users.fullName), asc(users.id));
  const members = new Map<number, Member>();
  for (const { role, ...row } of rows) {
    const member = members.get(row.id) ?? { ...row, roles: [] };
    member.roles.push(role as Role);
    members.set(row.id, member);
  }
  for (const member of members.values())
    member.roles.sort((a, b) => ROLE_ORDER.indexOf(a) - ROLE_ORDER.indexOf(b));
  return [...members.values()];
}

/** Members of the organisation with their roles there, by name. */
export function listMembers(db: Database, organisationId: number): Promise<Member[]> {
  return membersWhere(db, organisationId);
}

/** One member; HttpError 404 when the person is not in the organisation. */
export async function findMember(
  db: Database | Transaction,
  organisationId: number,
  userId: number,
): Promise<Member> {
  const [member] = await membersWhere(db, organisationId, userId);
  if (!member) throw new HttpError(404, `There is no person ${userId} in your organisation.`);
  return member;
}

/** The latest audit events about one person's account in this organisation, for their page. */
export async function memberHistory(db: Database, organisationId: number, userId: number) {
  return db
    .select({
      id: auditEvents.id,
      occurredAt: auditEvents.occurredAt,
      actorLabel: auditEvents.actorLabel,
      action: auditEvents.action,
      beforeValue: auditEvents.beforeValue,
      afterValue: auditEvents.afterValue,
    })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.organisationId, organisationId),
        eq(auditEvents.recordType, 'user'),
        eq(auditEvents.recordId, String(userId)),
      ),
    )
    .orderBy(desc(auditEvents.id))
    .limit(20);
}

async function activeAdminsOtherThan(tx: Transaction, organisationId: number, userId: number) {
  const [row] = await tx
    .select({ count: sql<number>`count(*)::int` })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(
      and(
        eq(memberships.organisationId, organisationId),
        eq(memberships.role, 'admin'),
        eq(users.active, true),
        ne(users.id, userId),
      ),
    );
  return row?.count ?? 0;
}

/** Runs a change to one member under the organisation's lock, with its audit event. */
async function changeMember<T>(
  db: Database,
  actor: SessionUser,
  userId: number,
  work: (
    tx: Transaction,
    member: Member,
  ) => Promise<{ action: string; before: unknown; after: unknown; result: T } | null>,
  context: AuditContext,
): Promise<T | null> {
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${ORGANISATION_ADMIN_LOCK}, ${actor.organisationId})`);
    await tx.select({ id: users.id }).from(users).where(eq(users.id, userId)).for('update');
    const member = await findMember(tx, actor.organisationId, userId);
    const change = await work(tx, member);
    if (!change) return null;
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: change.action,
      recordType: 'user',
      recordId: userId,
      before: change.before,
      after: change.after,
      context: { ...context, subject: member.email },
    });
    return change.result;
  });
}

/** Sets the member's roles in this organisation. Returns false when nothing changed. */
export async function setMemberRoles(
  db: Database,
  actor: SessionUser,
  userId: number,
  roles: readonly MemberRole[],
  context: AuditContext,
): Promise<boolean> {
  const changed = await changeMember(
    db,
    actor,
    userId,
    async (tx, member) => {
      const next = ROLE_ORDER.filter((role) => roles.includes(role));
      if (next.length === 0) throw new HttpError(400, 'Choose at least one role.');
      if (next.join() === member.roles.join()) return null;
      if (member.roles.includes('admin') && !next.includes('admin') && member.active) {
        if ((await activeAdminsOtherThan(tx, actor.organisationId, userId)) === 0)
          throw new HttpError(
            409,
            `${member.fullName} is the only active administrator: give another person the admin role first, so that someone can still manage the organisation.`,
          );
      }
      const removed = member.roles.filter((role) => !next.includes(role));
      const added = next.filter((role) => !member.roles.includes(role));
      if (removed.length > 0)
        await tx
          .delete(memberships)
          .where(
            and(
              eq(memberships.userId, userId),
              eq(memberships.organisationId, actor.organisationId),
              inArray(memberships.role, removed),
            ),
          );
      for (const role of added)
        await tx
          .insert(memberships)
          .values({ userId, organisationId: actor.organisationId, role })
          .onConflictDoNothing();
      return {
        action: 'user.roles-changed',
        before: { roles: member.roles },
        after: { roles: next },
        result: true,
      };
    },
    context,
  );
  return changed ?? false;
}

/** Deactivates the account: it can no longer sign in, and its sessions stop working. */
export async function deactivateMember(
  db: Database,
  actor: SessionUser,
  userId: number,
  context: AuditContext,
): Promise<boolean> {
  const changed = await changeMember(
    db,
    actor,
    userId,
    async (tx, member) => {
      if (!member.active) return null;
      if (userId === actor.id)
        throw new HttpError(409, 'You cannot deactivate your own account; ask another administrator.');
      if (
        member.roles.includes('admin') &&
        (await activeAdminsOtherThan(tx, actor.organisationId, userId)) === 0
      )
        throw new HttpError(
          409,
          `${member.fullName} is the only active administrator and cannot be deactivated.`,
        );
      await tx.update(users).set({ active: false, updatedAt: sql`now()` }).where(eq(users.id, userId));
      return { action: 'user.deactivated', before: { active: true }, after: { active: false }, result: true };
    },
    context,
  );
  return changed ?? false;
}

/** Reactivates a deactivated account with the roles it still holds. */
export async function reactivateMember(
  db: Database,
  actor: SessionUser,
  userId: number,
  context: AuditContext,
): Promise<boolean> {
  const changed = await changeMember(
    db,
    actor,
    userId,
    async (tx, member) => {
      if (member.active) return null;
      await tx.update(users).set({ active: true, updatedAt: sql`now()` }).where(eq(users.id, userId));
      return { action: 'user.reactivated', before: { active: false }, after: { active: true }, result: true };
    },
    context,
  );
  return changed ?? false;
}

/** Lifts a lockout after failed sign-ins (and clears the failure count). */
export async function unlockMember(
  db: Database,
  actor: SessionUser,
  userId: number,
  context: AuditContext,
): Promise<boolean> {
  const changed = await changeMember(
    db,
    actor,
    userId,
    async (tx, member) => {
      if (!member.locked && member.failedSignInCount === 0) return null;
      await tx
        .update(users)
        .set({ lockedUntil: null, failedSignInCount: 0, updatedAt: sql`now()` })
        .where(eq(users.id, userId));
      return {
        action: 'user.unlocked',
        before: { lockedUntil: member.lockedUntil, failedSignInCount: member.failedSignInCount },
        after: { lockedUntil: null, failedSignInCount: 0 },
        result: true,
      };
    },
    context,
  );
  return changed ?? false;
}
