import type { Request, Response } from 'express';
import { csrfToken } from '../auth/csrf.ts';
import type { ClientAssets } from './assets.ts';

/** Renders a page with what every page needs: the user, the CSRF token and the client assets. */
export function renderPage(
  req: Request,
  res: Response,
  view: string,
  locals: Record<string, unknown> = {},
  status = 200,
) {
  const assets = req.app.locals.assets as ClientAssets;
  const roles = req.user?.roles ?? [];
  res.status(status).render(view, {
    assets,
    user: req.user,
    csrfToken: req.session ? csrfToken(req) : '',
    nav: {
      admin: roles.includes('admin'),
      reviewer: roles.includes('reviewer'),
      analyst: roles.includes('analyst'),
    },
    ...locals,
  });
}
