import { type RequestHandler, Router } from 'express';
import { z } from 'zod';
import type { AppServices } from '../../platform/app-services.ts';
import { signedIn } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { INBOX_ITEM_KEY, inboxOf, markRead, unreadCount } from './inbox.ts';

const markReadForm = z.object({ item: z.string().regex(INBOX_ITEM_KEY, 'Choose an item of your inbox.') });

/** The person's inbox: what is assigned to them, returned to them, and signed on their reports. */
export function inboxRoutes(services: AppServices): Router {
  const router = Router();
  router.get('/inbox', signedIn(), async (req, res) => {
    const inbox = await inboxOf(services.db, req.user!);
    renderPage(req, res, 'inbox', {
      title: 'My inbox',
      inbox,
      counts: {
        assigned: inbox.assigned.length,
        returned: inbox.returned.length,
        signed: inbox.signed.length,
        unread: unreadCount(inbox),
      },
    });
  });
  router.post('/inbox/read', signedIn(), async (req, res) => {
    const form = markReadForm.parse(req.body ?? {});
    await markRead(services.db, req.user!, form.item);
    res.redirect(303, '/inbox');
  });
  return router;
}

/**
 * Puts the number of the signed-in person's unread inbox items into `res.locals.inboxCount`, which the site header shows on every page. Pages only: API calls
 * and anonymous requests skip the queries.
 */
export function inboxCount(services: AppServices): RequestHandler {
  return async (req, res, next) => {
    if (!req.user || req.method !== 'GET' || req.path.startsWith('/api/')) return next();
    const inbox = await inboxOf(services.db, req.user);
    res.locals.inboxCount = unreadCount(inbox);
    next();
  };
}
