import { type Request, type Response, Router } from 'express';
import {
  MAX_CHECKLIST_ITEM_LENGTH,
  MAX_CHECKLIST_ITEMS,
  MAX_CHECKLIST_REASON_LENGTH,
  reviewChecklistFormSchema,
} from '../../../shared/api/review-checklist.ts';
import { settingsFieldErrors } from '../../../shared/api/settings.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { noticeAndBack, takeNotice } from '../../platform/web/admin-notice.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { currentReviewChecklist, saveReviewChecklist } from './review-checklist.ts';

const PAGE = '/admin/review-checklist';

/**
 * The review checklist page: admins see the current version and save a new one (one item per
 * line, with the reason for the change). A refused form is shown again with what was typed and a
 * message beside each field; nothing is stored then.
 */
export function reviewChecklistRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;

  async function renderChecklist(
    req: Request,
    res: Response,
    options: {
      values?: { items: string; reason: string };
      errors?: Record<string, string>;
      status?: number;
    } = {},
  ) {
    const current = await currentReviewChecklist(db, req.user!.organisationId);
    const errors = options.errors ?? {};
    renderPage(
      req,
      res,
      'admin-review-checklist',
      {
        title: 'Review checklist',
        notice: takeNotice(req),
        current,
        values: options.values ?? { items: current.items.join('\n'), reason: '' },
        errors,
        errorCount: Object.keys(errors).length,
        limits: {
          items: MAX_CHECKLIST_ITEMS,
          itemLength: MAX_CHECKLIST_ITEM_LENGTH,
          reasonLength: MAX_CHECKLIST_REASON_LENGTH,
        },
      },
      options.status ?? 200,
    );
  }

  router.get(PAGE, requireRole('admin'), async (req, res) => {
    await renderChecklist(req, res);
  });

  router.post(PAGE, requireRole('admin'), async (req, res) => {
    const body = (req.body ?? {}) as Record<string, unknown>;
    const parsed = reviewChecklistFormSchema.safeParse(body);
    if (!parsed.success)
      return renderChecklist(req, res, {
        values: { items: String(body.items ?? ''), reason: String(body.reason ?? '') },
        errors: settingsFieldErrors(parsed.error),
        status: 400,
      });
    const { versionNumber } = await saveReviewChecklist(db, req.user!, parsed.data, auditContext(req));
    const text =
      versionNumber === null
        ? 'Nothing had changed, so no new version was made.'
        : parsed.data.items.length === 0
          ? `Saved as version ${versionNumber}: there is no checklist now, so reviewers sign without one. The change is in the audit trail.`
          : `Saved as version ${versionNumber} (${parsed.data.items.length} item${parsed.data.items.length === 1 ? '' : 's'}). Reviewers confirm it from their next signing; the change is in the audit trail.`;
    noticeAndBack(req, res, PAGE, 'done', text);
  });

  return router;
}
