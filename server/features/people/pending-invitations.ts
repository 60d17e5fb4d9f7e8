import { and, asc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { MemberRole } from '../../../shared/api/user-admin.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database } from '../../platform/db/client.ts';
import { invitations, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { AuditContext } from '../settings/index.ts';

export interface PendingInvitation {
  id: number;
  email: string;
  fullName: string;
  roles: MemberRole[];
  expiresAt: Date;
  createdAt: Date;
  invitedBy: string;
}

/** Invitations of the organisation not used and not expired, oldest first. */
export async function listPendingInvitations(
  db: Database,
  organisationId: number,
): Promise<PendingInvitation[]> {
  const rows = await db
    .select({
      id: invitations.id,
      email: invitations.email,
      fullName: invitations.fullName,
      roles: invitations.roles,
      expiresAt: invitations.expiresAt,
      createdAt: invitations.createdAt,
      invitedBy: users.fullName,
    })
    .from(invitations)
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(
      and(
        eq(invitations.organisationId, organisationId),
        isNull(invitations.usedAt),
        gt(invitations.expiresAt, sql`now()`),
      ),
    )
    .orderBy(asc(invitations.createdAt));
  return rows.map((row) => ({ ...row, roles: row.roles as MemberRole[] }));
}

/** Withdraws an open invitation: its link stops working at once. */
export async function revokeInvitation(
  db: Database,
  actor: SessionUser,
  invitationId: number,
  context: AuditContext,
): Promise<void> {
  await db.transaction(async (tx) => {
    const [invitation] = await tx
      .select()
      .from(invitations)
      .where(and(eq(invitations.id, invitationId), eq(invitations.organisationId, actor.organisationId)))
      .for('update');
    if (!invitation) throw new HttpError(404, `There is no invitation ${invitationId} in your organisation.`);
    const [open] = await tx
      .update(invitations)
      .set({ expiresAt: sql`now()` })
      .where(
        and(
          eq(invitations.id, invitationId),
          isNull(invitations.usedAt),
          gt(invitations.expiresAt, sql`now()`),
        ),
      )
      .returning();
    if (!open) throw new HttpError(409, 'This invitation was already used or has expired.');
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'invitation.revoked',
      recordType: 'invitation',
      recordId: invitationId,
      before: { expiresAt: invitation.expiresAt },
      after: { expiresAt: open.expiresAt },
      context: { ...context, email: invitation.email },
    });
  });
}
