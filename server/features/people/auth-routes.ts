import { type RequestHandler, Router } from 'express';
import { rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { csrfToken } from '../../platform/auth/csrf.ts';
import { MISSING_CREDENTIALS, PASSWORD_STRATEGY } from '../../platform/auth/passport-setup.ts';
import { PostgresRateLimitStore } from '../../platform/auth/postgres-rate-limit-store.ts';
import { publicRoute, signedIn } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';

const signInForm = z.object({
  email: z.string().trim().max(254).default(''),
  password: z.string().max(1024).default(''),
  next: z.string().max(2000).optional(),
});

/** Only same-site paths may follow sign-in, never another host. */
function safeNext(next: string | undefined): string {
  return next?.startsWith('/') && !next.startsWith('//') && !next.startsWith('/\\') ? next : '/';
}

export function authRoutes(services: AppServices): Router {
  const router = Router();
  const signInLimiter: RequestHandler = rateLimit({
    windowMs: 15 * 60_000,
    limit: services.options.signInRateLimit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    store: new PostgresRateLimitStore(services.pool, `${services.options.rateLimitPrefix}signin:`),
    handler: (req, res) =>
      renderPage(
        req,
        res,
        'signin',
        {
          title: 'Sign in',
          error: 'Too many sign-in attempts from this address. Wait 15 minutes and try again.',
        },
        429,
      ),
  });

  router.get('/signin', publicRoute(), (req, res) => {
    if (req.user) return res.redirect(303, '/');
    renderPage(req, res, 'signin', {
      title: 'Sign in',
      next: typeof req.query.next === 'string' ? req.query.next : '',
    });
  });

  router.post('/signin', publicRoute(), signInLimiter, (req, res, next) => {
    const form = signInForm.parse(req.body ?? {});
    const refuse = (message: string) =>
      renderPage(
        req,
        res,
        'signin',
        { title: 'Sign in', error: message, email: form.email, next: form.next ?? '' },
        401,
      );
    const verdict = (error: unknown, user: Express.User | false, info?: { message?: string }) => {
      if (error) return next(error);
      if (!user)
        return refuse(
          info?.message === 'Missing credentials'
            ? MISSING_CREDENTIALS
            : (info?.message ?? MISSING_CREDENTIALS),
        );
      // passport 0.7 regenerates the session on login (session fixation defence); a new CSRF token follows.
      req.login(user, (loginError) => {
        if (loginError) return next(loginError);
        csrfToken(req);
        req.session.save((saveError) =>
          saveError ? next(saveError) : res.redirect(303, safeNext(form.next)),
        );
      });
    };
    req.body = { ...req.body, email: form.email, password: form.password };
    services.authenticator.authenticate(PASSWORD_STRATEGY, { session: false }, verdict)(req, res, next);
  });

  router.post('/signout', signedIn(), async (req, res, next) => {
    const user = req.user!;
    await appendAuditEvent(services.db, {
      organisationId: user.organisationId,
      actorUserId: user.id,
      actorLabel: user.email,
      action: 'sign-out',
      context: auditContext(req),
    });
    req.logout((error) => {
      if (error) return next(error);
      req.session.destroy(() => {
        res.clearCookie(services.options.cookieName);
        res.redirect(303, '/signin');
      });
    });
  });

  return router;
}
