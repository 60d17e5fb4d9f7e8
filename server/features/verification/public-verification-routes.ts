import { type ErrorRequestHandler, type Request, type RequestHandler, type Response, Router } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { AppServices } from '../../platform/app-services.ts';
import { clientNetwork } from '../../platform/auth/client-network.ts';
import { PostgresRateLimitStore } from '../../platform/auth/postgres-rate-limit-store.ts';
import { publicRoute } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { checkPublicPdf } from './public-verification.ts';
import { LIMIT_MB, receivePdf } from './receive-pdf.ts';

export const PUBLIC_CHECK_PATH = '/check-a-pdf';
/** Checks per client network in one window: a customer or inspector checks a handful of files. */
export const PUBLIC_CHECK_LIMIT = 20;
const WINDOW_MINUTES = 15;
const TITLE = 'Check a Rateledger PDF';

const show = (req: Request, res: Response, locals: Record<string, unknown>, status = 200) =>
  renderPage(req, res, 'check-a-pdf', { title: TITLE, limitMb: LIMIT_MB, ...locals }, status);

/**
 * The public check page for people outside the organisation: anyone posts the PDF itself (a plain
 * multipart form, no script needed) and reads the answer of `checkPublicPdf`. Nothing here
 * touches the session, so an anonymous check writes no session row.
 *
 * Mounted before the app's global CSRF check, because that check runs before a multipart body is
 * read: here the order is rate limit → bounded read (`receivePdf`, the signed-in page's limits) →
 * the same CSRF check (`protect`, the anonymous signed double-submit token in the `_csrf` field) →
 * the check. Every refusal is the page again with a clear 4xx status, never a 500.
 */
export function publicVerificationRoutes(services: AppServices, protect: RequestHandler): Router {
  const router = Router();
  const limiter = rateLimit({
    windowMs: WINDOW_MINUTES * 60_000,
    limit: PUBLIC_CHECK_LIMIT,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    // Counted by network as sign-in throttling counts (an IPv6 /64 is one client).
    keyGenerator: (req) => clientNetwork(req.ip),
    // express-rate-limit's IPv6 warning looks for `req.ip` in the key; clientNetwork groups /64s itself.
    validate: { keyGeneratorIpFallback: false },
    store: new PostgresRateLimitStore(services.pool, `${services.options.rateLimitPrefix}public-check:`),
    handler: (req, res) =>
      show(
        req,
        res,
        { error: `Too many checks from this network. Wait ${WINDOW_MINUTES} minutes and try again.` },
        429,
      ),
  });
  // Errors of the read and of the CSRF check come back as this page, not the generic error page.
  const refusal: ErrorRequestHandler = (error, req, res, next) => {
    if (!(error instanceof HttpError)) return next(error);
    show(req, res, { error: error.message }, error.status);
  };

  const answer: RequestHandler = async (req, res) => {
    res.set('cache-control', 'no-store');
    const bytes = req.file?.buffer;
    if (!bytes || bytes.length === 0)
      return show(req, res, { error: 'Choose the PDF file you want to check; the upload was empty.' }, 400);
    if (!bytes.subarray(0, 1024).includes('%PDF-'))
      return show(
        req,
        res,
        { error: 'This file is not a PDF (it does not start like one). Choose the PDF you received.' },
        422,
      );
    show(req, res, { result: await checkPublicPdf(services.db, bytes) });
  };

  router.get(PUBLIC_CHECK_PATH, publicRoute(), (req, res) => {
    res.set('cache-control', 'no-store');
    show(req, res, {});
  });

  router.post(PUBLIC_CHECK_PATH, publicRoute(), limiter, receivePdf(), protect, answer, refusal);

  return router;
}
