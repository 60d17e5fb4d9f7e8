import { type Request, type Response, Router } from 'express';
import { ZodError } from 'zod';
import { recordIdSchema } from '../../../shared/api/studies.ts';
import {
  inviteFormSchema,
  MEMBER_ROLES,
  type PeopleResponse,
  ROLE_DESCRIPTIONS,
  rolesFormSchema,
} from '../../../shared/api/user-admin.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { noticeAndBack, takeNotice } from '../../platform/web/admin-notice.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { describePasswordPolicy, loadOrganisationSettings } from '../settings/index.ts';
import { inviteMember } from './invite-member.ts';
import { lockCause } from './lock-cause.ts';
import { requestPasswordReset } from './password-reset.ts';
import { listPendingInvitations, revokeInvitation } from './pending-invitations.ts';
import {
  deactivateMember,
  findMember,
  listMembers,
  memberHistory,
  reactivateMember,
  setMemberRoles,
  unlockMember,
} from './user-admin.ts';

const fromBody = (req: Request) => (req.body ?? {}) as Record<string, unknown>;

const deliveryNote = (delivery: { status: string; reason: string | null } | null) =>
  delivery?.status === 'sent'
    ? 'The message was handed to the mail server (see the outbox).'
    : `The message could not be sent (${delivery?.reason ?? 'no delivery attempt'}); the link was recorded but nobody received it. Check the mail settings, then send it again.`;

function inviteLocals(values: Record<string, unknown>, errors: Record<string, string>) {
  const chosen = new Set([values.roles ?? []].flat().map(String));
  return {
    title: 'Invite a person',
    values,
    errors,
    errorCount: Object.keys(errors).length,
    signingConfirmed: values.confirmSigningRole === 'yes',
    roles: MEMBER_ROLES.map((role) => ({
      role,
      description: ROLE_DESCRIPTIONS[role],
      checked: chosen.has(role),
    })),
  };
}

/** Administration of people and roles. Every route is for admins only. */
export function userAdminRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;

  router.get('/admin/people', requireRole('admin'), async (req, res) => {
    const organisationId = req.user!.organisationId;
    const [members, invitations, settings] = await Promise.all([
      listMembers(db, organisationId),
      listPendingInvitations(db, organisationId),
      loadOrganisationSettings(db, organisationId),
    ]);
    renderPage(req, res, 'admin-people', {
      title: 'People and roles',
      notice: takeNotice(req),
      members: members.map((member) => ({ ...member, isSelf: member.id === req.user!.id })),
      invitations,
      policy: describePasswordPolicy({
        minLength: settings.passwordMinLength,
        requiredClasses: settings.passwordRequireClasses,
      }),
      settings,
    });
  });

  router.get('/admin/people/invite', requireRole('admin'), (req, res) => {
    renderPage(req, res, 'admin-people-invite', inviteLocals({ roles: [] }, {}));
  });

  router.post('/admin/people/invite', requireRole('admin'), async (req, res) => {
    const parsed = inviteFormSchema.safeParse(fromBody(req));
    if (!parsed.success) {
      const errors: Record<string, string> = {};
      for (const issue of parsed.error.issues) errors[String(issue.path[0] ?? 'form')] ??= issue.message;
      return renderPage(req, res, 'admin-people-invite', inviteLocals(fromBody(req), errors), 400);
    }
    try {
      const invited = await inviteMember(db, req.user!, parsed.data, auditContext(req));
      const who = `${parsed.data.fullName} <${parsed.data.email}>`;
      noticeAndBack(
        req,
        res,
        '/admin/people',
        invited.delivery?.status === 'sent' ? 'done' : 'error',
        `Invitation for ${who} recorded. ${deliveryNote(invited.delivery)}`,
      );
    } catch (error) {
      if (error instanceof HttpError && error.status === 409) {
        const details = (error.details ?? []) as { field: string; message: string }[];
        const errors = Object.fromEntries(details.map((detail) => [detail.field, detail.message]));
        return renderPage(req, res, 'admin-people-invite', inviteLocals(fromBody(req), errors), 409);
      }
      throw error;
    }
  });

  router.post('/admin/invitations/:invitationId/revoke', requireRole('admin'), async (req, res) => {
    const invitationId = recordIdSchema.parse(req.params.invitationId);
    await revokeInvitation(db, req.user!, invitationId, auditContext(req));
    noticeAndBack(
      req,
      res,
      '/admin/people',
      'done',
      'The invitation was withdrawn: its link no longer works.',
    );
  });

  router.get('/admin/people/:userId', requireRole('admin'), async (req, res) => {
    const userId = recordIdSchema.parse(req.params.userId);
    const organisationId = req.user!.organisationId;
    const member = await findMember(db, organisationId, userId);
    const [history, cause] = await Promise.all([
      memberHistory(db, organisationId, userId),
      member.locked ? lockCause(db, organisationId, userId) : null,
    ]);
    renderPage(req, res, 'admin-people-person', {
      title: member.fullName,
      notice: takeNotice(req),
      member,
      lockCause: cause,
      isSelf: member.id === req.user!.id,
      roles: MEMBER_ROLES.map((role) => ({
        role,
        description: ROLE_DESCRIPTIONS[role],
        checked: member.roles.includes(role),
      })),
      history: history.map((event) => ({
        ...event,
        before: event.beforeValue === null ? '' : JSON.stringify(event.beforeValue),
        after: event.afterValue === null ? '' : JSON.stringify(event.afterValue),
      })),
    });
  });

  /** Runs one action on a person; a refusal (400/409) comes back as a notice on their page. */
  const personAction = (
    action: (req: Request, userId: number) => Promise<string>,
  ): ((req: Request, res: Response) => Promise<void>) => {
    return async (req, res) => {
      const userId = recordIdSchema.parse(req.params.userId);
      const back = `/admin/people/${userId}`;
      try {
        const text = await action(req, userId);
        noticeAndBack(req, res, back, 'done', text);
      } catch (error) {
        if (error instanceof HttpError && [400, 409].includes(error.status))
          return noticeAndBack(req, res, back, 'error', error.message);
        if (error instanceof ZodError)
          return noticeAndBack(
            req,
            res,
            back,
            'error',
            error.issues[0]?.message ?? 'The form was not valid.',
          );
        throw error;
      }
    };
  };

  router.post(
    '/admin/people/:userId/roles',
    requireRole('admin'),
    personAction(async (req, userId) => {
      const { roles } = rolesFormSchema.parse(fromBody(req));
      const changed = await setMemberRoles(db, req.user!, userId, roles, auditContext(req));
      return changed ? `Roles saved: ${roles.join(', ')}.` : 'The roles were already these; nothing changed.';
    }),
  );

  router.post(
    '/admin/people/:userId/deactivate',
    requireRole('admin'),
    personAction(async (req, userId) =>
      (await deactivateMember(db, req.user!, userId, auditContext(req)))
        ? 'The account is deactivated: it cannot sign in, and its open sessions have stopped working. Its records and signatures stay.'
        : 'The account was already deactivated.',
    ),
  );

  router.post(
    '/admin/people/:userId/reactivate',
    requireRole('admin'),
    personAction(async (req, userId) =>
      (await reactivateMember(db, req.user!, userId, auditContext(req)))
        ? 'The account is active again, with the roles shown.'
        : 'The account was already active.',
    ),
  );

  router.post(
    '/admin/people/:userId/unlock',
    requireRole('admin'),
    personAction(async (req, userId) =>
      (await unlockMember(db, req.user!, userId, auditContext(req)))
        ? 'The account is unlocked; the count of failed sign-ins starts again from zero.'
        : 'The account was not locked.',
    ),
  );

  router.post(
    '/admin/people/:userId/password-reset',
    requireRole('admin'),
    personAction(async (req, userId) => {
      const reset = await requestPasswordReset(db, req.user!, userId, auditContext(req));
      if (reset.delivery?.status !== 'sent') throw new HttpError(409, deliveryNote(reset.delivery));
      return `A password reset link was sent; it works once, until ${reset.expiresAt.toISOString().replace('T', ' ').slice(0, 16)} UTC. ${deliveryNote(reset.delivery)}`;
    }),
  );

  router.get('/api/admin/people', requireRole('admin'), async (req, res) => {
    const organisationId = req.user!.organisationId;
    const [members, invitations] = await Promise.all([
      listMembers(db, organisationId),
      listPendingInvitations(db, organisationId),
    ]);
    const iso = (date: Date | null) => (date ? date.toISOString() : null);
    const body: PeopleResponse = {
      people: members.map((member) => ({
        id: member.id,
        fullName: member.fullName,
        email: member.email,
        active: member.active,
        locked: member.locked,
        lockedUntil: iso(member.lockedUntil),
        lastSignInAt: iso(member.lastSignInAt),
        roles: member.roles,
      })),
      invitations: invitations.map((invitation) => ({
        id: invitation.id,
        email: invitation.email,
        fullName: invitation.fullName,
        roles: invitation.roles,
        expiresAt: invitation.expiresAt.toISOString(),
        invitedBy: invitation.invitedBy,
      })),
    };
    res.json(body);
  });

  return router;
}
