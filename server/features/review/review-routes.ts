import { type Request, type Response, Router } from 'express';
import {
  returnForReworkSchema,
  reviewVersionParamSchema,
  signReportSchema,
  submitForReviewSchema,
} from '../../../shared/api/review.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { sendPdf } from '../../platform/http/pdf-response.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { versionPdf } from '../reports/index.ts';
import { typedChecklistTicks } from './checklist-confirmation.ts';
import { signReportVersion } from './e-signature.ts';
import { signFormErrorSummary } from './form-error-summary.ts';
import { returnForRework } from './return-for-rework.ts';
import type { ReviewActionContext, ReviewTarget } from './review-action.ts';
import { reviewPageModel } from './review-page-model.ts';
import { reviewPath } from './review-paths.ts';
import { returnedToMe, reviewQueue } from './review-queue.ts';
import { signedPdfDownload } from './signed-pdf-download.ts';
import { submitForReview } from './submit-for-review.ts';

declare module 'express-session' {
  interface SessionData {
    /**
     * Set after the first successful signing of this session: later signings need the password
     * only (21 CFR 11.200(a)(1)(i)). Signing in again starts a new session without it.
     */
    firstSigningDone?: boolean;
    /** What the last review form did, shown once on the next page (post/redirect/get). */
    reviewNotice?: string;
  }
}

const READERS = ['analyst', 'reviewer', 'admin'] as const;

/** The version a review route is about, from its path parameters. */
function reviewTarget(req: Request): ReviewTarget {
  const { reportId, version } = reviewVersionParamSchema.parse(req.params);
  return { reportId, versionNumber: version };
}

/** Field errors of a refused form, by field name, for the page to show beside the fields. */
function fieldErrors(error: HttpError): Record<string, string> {
  const details = Array.isArray(error.details)
    ? (error.details as { field?: string; message?: string }[])
    : [];
  return Object.fromEntries(details.map((detail) => [detail.field ?? 'form', detail.message ?? '']));
}

/**
 * Review and signing, server-rendered: the reviewer's queue, one version's review page with the
 * submit, return and sign forms, and the signed PDF. A refused form is shown again with its
 * message and the status it earned (401 wrong password, 403 not allowed, 409 wrong state, 423
 * locked); nothing typed is lost except the password.
 */
export function reviewRoutes(services: AppServices): Router {
  const router = Router();
  const { db, storage } = services;
  const actionContext = (req: Request): ReviewActionContext => ({
    db,
    actor: req.user!,
    audit: auditContext(req),
  });

  async function showPage(
    req: Request,
    res: Response,
    target: ReviewTarget,
    extra: Record<string, unknown> = {},
    status = 200,
  ) {
    const model = await reviewPageModel({ db, actor: req.user!, target, session: req.session });
    renderPage(
      req,
      res,
      'review-version',
      { title: `Review ${model.report.number} v${model.version.number}`, ...model, ...extra },
      status,
    );
  }

  /** Runs a form's action; on an HttpError shows the page again with the message and status. */
  async function formAction(
    req: Request,
    res: Response,
    form: 'submit' | 'return' | 'sign',
    action: (target: ReviewTarget) => Promise<string>,
  ) {
    const target = reviewTarget(req);
    try {
      req.session.reviewNotice = await action(target);
      res.redirect(303, reviewPath(target.reportId, target.versionNumber));
    } catch (error) {
      const known = error instanceof HttpError ? error : null;
      const zod =
        (error as { name?: string }).name === 'ZodError'
          ? (error as { issues: { path: PropertyKey[]; message: string }[] })
          : null;
      if (!known && !zod) throw error;
      const errors = known
        ? fieldErrors(known)
        : Object.fromEntries(zod!.issues.map((issue) => [String(issue.path[0] ?? 'form'), issue.message]));
      const body = (req.body ?? {}) as Record<string, unknown>;
      await showPage(
        req,
        res,
        target,
        {
          formError: { [form]: known ? known.message : 'Some fields are not valid.' },
          errors: { [form]: errors },
          errorSummary: { [form]: form === 'sign' ? signFormErrorSummary(errors) : [] },
          typed: {
            [form]: {
              note: body.note,
              comment: body.comment,
              meaning: body.meaning,
              identity: body.identity,
              checked: typedChecklistTicks(body.checklistConfirmed, known?.status),
            },
          },
        },
        known?.status ?? 400,
      );
    }
  }

  router.get('/review', requireRole('reviewer', 'analyst'), async (req, res) => {
    const [queue, returned] = await Promise.all([reviewQueue(db, req.user!), returnedToMe(db, req.user!)]);
    renderPage(req, res, 'review-queue', {
      title: 'Review',
      isReviewer: req.user!.roles.includes('reviewer'),
      queue: queue.map((item) => ({ ...item, href: reviewPath(item.reportId, item.versionNumber) })),
      returned: returned.map((item) => ({ ...item, href: reviewPath(item.reportId, item.versionNumber) })),
    });
  });

  router.get('/review/reports/:reportId/versions/:version', requireRole(...READERS), async (req, res) => {
    const target = reviewTarget(req);
    const notice = req.session.reviewNotice ?? null;
    delete req.session.reviewNotice;
    await showPage(req, res, target, { notice });
  });

  router.post('/review/reports/:reportId/versions/:version/submit', requireRole('analyst'), (req, res) =>
    formAction(req, res, 'submit', async (target) => {
      const outcome = await submitForReview({
        target,
        request: submitForReviewSchema.parse(req.body ?? {}),
        context: actionContext(req),
      });
      return `Submitted for review (round ${outcome.round}) to ${outcome.reviewers.map((person) => person.fullName).join(', ')}.`;
    }),
  );

  router.post('/review/reports/:reportId/versions/:version/return', requireRole('reviewer'), (req, res) =>
    formAction(req, res, 'return', async (target) => {
      await returnForRework({
        target,
        request: returnForReworkSchema.parse(req.body ?? {}),
        context: actionContext(req),
      });
      return 'Returned to the author with your comment.';
    }),
  );

  // Open to every member so that an author's attempt to sign is refused by the service and recorded.
  router.post('/review/reports/:reportId/versions/:version/sign', requireRole(...READERS), (req, res) =>
    formAction(req, res, 'sign', async (target) => {
      const input = signReportSchema.parse(req.body ?? {});
      const outcome = await signReportVersion({
        target,
        request: input,
        context: { ...actionContext(req), storage, session: req.session },
      });
      req.session.firstSigningDone = true;
      await new Promise<void>((resolve, reject) =>
        req.session.save((error) => (error ? reject(error) : resolve())),
      );
      return `Signed (${input.meaning}) at ${outcome.signedAtText}. The version is now locked.`;
    }),
  );

  // The PDF under review, inline, for the viewer beside the signing form. Its own policy lets only
  // this site's pages frame it (the app's pages may not be framed at all).
  router.get(
    '/review/reports/:reportId/versions/:version/under-review.pdf',
    requireRole(...READERS),
    async (req, res) => {
      const target = reviewTarget(req);
      const file = await versionPdf({
        db,
        storage,
        organisationId: req.user!.organisationId,
        reportId: target.reportId,
        versionNumber: target.versionNumber,
        requestId: req.id ?? null,
        kind: 'rendition',
      });
      sendPdf(res, file, { disposition: 'inline', immutable: true, frameableBySelf: true });
    },
  );

  router.get(
    '/review/reports/:reportId/versions/:version/signed.pdf',
    requireRole(...READERS),
    async (req, res) => {
      const file = await signedPdfDownload({
        db,
        storage,
        actor: req.user!,
        target: reviewTarget(req),
        requestId: req.id ?? null,
      });
      sendPdf(res, file, { disposition: 'attachment', immutable: true });
    },
  );

  return router;
}
