import { Router } from 'express';
import type { SessionExtendResponse } from '../../../shared/api/session.ts';
import type { AppServices } from '../app-services.ts';
import { signedIn } from './route-policy.ts';
import { touchSlackMs } from './session-store.ts';

/**
 * Warning before the idle sign-out, and extending the session (WCAG 2.1 2.2.1 Timing
 * Adjustable: warn before a time limit ends and let the person extend it with a simple action;
 * https://www.w3.org/WAI/WCAG21/Understanding/timing-adjustable.html). The idle sign-out itself
 * (EU GMP Annex 11 §12.1) stays as it is: only a request to the server keeps a session alive.
 */

/** When the page warns: this long before the earliest moment of the sign-out. */
export const WARN_BEFORE_MS = 2 * 60_000;

/**
 * What every page tells its script about the sign-out (`app.locals.sessionTimeout`, read by the
 * layout): after a request that rolled the session, the sign-out comes no sooner than the idle
 * timeout less the store's slack (`session-store.ts` may leave the row's expiry up to the slack
 * behind), so the page counts from there.
 */
export function sessionTimeoutLocals(idleMinutes: number) {
  const idleMs = idleMinutes * 60_000;
  return { idleMinutes, signOutInMs: idleMs - touchSlackMs(idleMs), warnBeforeMs: WARN_BEFORE_MS };
}

export function sessionExtendRoutes(services: AppServices): Router {
  const router = Router();
  const idleMs = services.options.idleMinutes * 60_000;

  /**
   * "Stay signed in": the session's expiry is rewritten to a full timeout from now. A plain
   * request would not always do that — the store skips rewrites within its slack — so the
   * session is touched (its cookie's expiry reset) and saved explicitly, which writes the row
   * with its new expiry whatever the slack. The answer says how long until the sign-out.
   */
  router.post('/api/session/extend', signedIn(), (req, res, next) => {
    req.session.touch();
    req.session.save((error) => {
      if (error) return next(error);
      const body: SessionExtendResponse = { signOutInMs: idleMs };
      res.set('cache-control', 'no-store').json(body);
    });
  });
  return router;
}
