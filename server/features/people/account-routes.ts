import { type Request, type Response, Router } from 'express';
import type { ZodError } from 'zod';
import { linkTokenSchema, newPasswordFormSchema, ROLE_DESCRIPTIONS } from '../../../shared/api/user-admin.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { publicRoute } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { describePasswordPolicy } from '../settings/index.ts';
import { acceptInvitation, type InvitationView, openInvitation } from './accept-invitation.ts';
import { closedLinkMessage } from './link-tokens.ts';
import { PasswordPolicyError } from './password-policy-error.ts';
import { completePasswordReset, openPasswordReset, type PasswordResetView } from './password-reset.ts';

/**
 * The public pages behind the links Rateledger mails: accepting an invitation and choosing a new
 * password. They are reachable without signing in (the one-time token is the credential); a
 * used, expired or unknown link gets a page that says so and what to do. The token never reaches
 * a log or another site: these pages are not cached and send no referrer (helmet's default).
 */

function tokenOf(req: Request): string {
  const parsed = linkTokenSchema.safeParse(req.params.token);
  if (!parsed.success)
    throw new HttpError(
      404,
      'This link is not valid. Check that the whole link was copied from the message.',
    );
  return parsed.data;
}

const noStore = (res: Response) => res.set('cache-control', 'no-store');

/** Field → every message (the password field lists each rule it breaks). */
function formErrors(error: ZodError): Record<string, string[]> {
  const errors: Record<string, string[]> = {};
  for (const issue of error.issues) {
    const field = String(issue.path[0] ?? 'form');
    errors[field] = [...(errors[field] ?? []), issue.message];
  }
  return errors;
}

function passwordErrors(error: unknown): Record<string, string[]> | null {
  if (error instanceof PasswordPolicyError) return { password: error.problems };
  return null;
}

/** The 410 page for a used, expired or withdrawn link: the same page wherever it is refused. */
const CLOSED_LINK_PAGES = {
  invitation: { view: 'invitation-closed', title: 'Invitation link not valid' },
  reset: { view: 'password-reset-closed', title: 'Password reset link not valid' },
} as const;

function renderClosedLink(
  req: Request,
  res: Response,
  kind: keyof typeof CLOSED_LINK_PAGES,
  message: string,
) {
  const page = CLOSED_LINK_PAGES[kind];
  renderPage(req, res, page.view, { title: page.title, message }, 410);
}

function invitationLocals(req: Request, view: InvitationView, token: string) {
  const signedInAsInvitee = req.user?.email === view.email;
  return {
    title: `Join ${view.organisationName}`,
    invitation: view,
    action: `/invitations/${token}`,
    roles: view.roles.map((role) => ({ role, description: ROLE_DESCRIPTIONS[role] })),
    policy: describePasswordPolicy(view.policy),
    signedInAsInvitee,
    signedInAsOther: Boolean(req.user) && !signedInAsInvitee,
    signInPath: `/signin?next=${encodeURIComponent(`/invitations/${token}`)}`,
  };
}

export function accountRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;

  router.get('/invitations/:token', publicRoute(), async (req, res) => {
    noStore(res);
    const token = tokenOf(req);
    const view = await openInvitation(db, token);
    if (view.state !== 'open') {
      return renderClosedLink(req, res, 'invitation', closedLinkMessage(view.state, 'invitation'));
    }
    renderPage(req, res, 'invitation', invitationLocals(req, view, token));
  });

  router.post('/invitations/:token', publicRoute(), async (req, res) => {
    noStore(res);
    const token = tokenOf(req);
    const view = await openInvitation(db, token);
    if (view.state !== 'open') {
      return renderClosedLink(req, res, 'invitation', closedLinkMessage(view.state, 'invitation'));
    }
    let password: string | undefined;
    if (!view.existingAccount) {
      const form = newPasswordFormSchema.safeParse(req.body ?? {});
      if (!form.success) {
        const errors = formErrors(form.error);
        return renderPage(req, res, 'invitation', { ...invitationLocals(req, view, token), errors }, 400);
      }
      password = form.data.password;
    }
    try {
      const accepted = await acceptInvitation(db, token, { password, signedIn: req.user }, auditContext(req));
      renderPage(req, res, 'invitation-accepted', {
        title: 'Welcome to Rateledger',
        accepted,
        roles: accepted.roles.join(', '),
        signedInAsOther: Boolean(req.user) && req.user?.email !== accepted.email,
      });
    } catch (error) {
      const errors = passwordErrors(error);
      if (errors)
        return renderPage(req, res, 'invitation', { ...invitationLocals(req, view, token), errors }, 400);
      if (error instanceof HttpError && error.status === 410) {
        return renderClosedLink(req, res, 'invitation', error.message);
      }
      throw error;
    }
  });

  const resetLocals = (view: PasswordResetView, token: string) => ({
    title: 'Choose a new password',
    reset: view,
    action: `/password-reset/${token}`,
    policy: describePasswordPolicy(view.policy),
  });

  router.get('/password-reset/:token', publicRoute(), async (req, res) => {
    noStore(res);
    const token = tokenOf(req);
    const view = await openPasswordReset(db, token);
    if (view.state !== 'open') {
      return renderClosedLink(req, res, 'reset', closedLinkMessage(view.state, 'reset'));
    }
    renderPage(req, res, 'password-reset', resetLocals(view, token));
  });

  router.post('/password-reset/:token', publicRoute(), async (req, res) => {
    noStore(res);
    const token = tokenOf(req);
    const view = await openPasswordReset(db, token);
    if (view.state !== 'open') {
      return renderClosedLink(req, res, 'reset', closedLinkMessage(view.state, 'reset'));
    }
    const form = newPasswordFormSchema.safeParse(req.body ?? {});
    if (!form.success) {
      const errors = formErrors(form.error);
      return renderPage(req, res, 'password-reset', { ...resetLocals(view, token), errors }, 400);
    }
    try {
      const done = await completePasswordReset(db, token, form.data.password, auditContext(req));
      // The person's sessions were ended with the reset; this browser's too, if it was one.
      if (req.user?.email === done.email) await new Promise<void>((resolve) => req.logout(() => resolve()));
      renderPage(req, res, 'password-reset-done', { title: 'Password changed', email: done.email });
    } catch (error) {
      const errors = passwordErrors(error);
      if (errors) return renderPage(req, res, 'password-reset', { ...resetLocals(view, token), errors }, 400);
      if (error instanceof HttpError && error.status === 410) {
        return renderClosedLink(req, res, 'reset', error.message);
      }
      throw error;
    }
  });

  return router;
}
