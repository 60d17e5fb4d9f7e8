import type { Request, Response } from 'express';
import type { ClientAssets } from './assets.ts';

/**
 * Renders a page with what every page needs: the user, the CSRF token and the client assets.
 * The token comes from the CSRF middleware (the session's when signed in, a signed cookie's for an
 * anonymous visitor, so that a page view never creates a session); a page rendered before that
 * middleware ran (an early error) gets none.
 */
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
    csrfToken: req.pageCsrfToken?.() ?? '',
    nav: {
      admin: roles.includes('admin'),
      reviewer: roles.includes('reviewer'),
      analyst: roles.includes('analyst'),
    },
    ...locals,
  });
}
