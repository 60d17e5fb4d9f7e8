import { Router } from 'express';
import type { AppServices } from '../../platform/app-services.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { describeSmtpUrl } from '../../platform/mail/mail-config.ts';
import { mailTransportSettings } from '../../platform/mail/mail-transport.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import {
  getOutboxMessage,
  hasLocalOutbox,
  listOutbox,
  outboxListQuerySchema,
  outboxMessageParamSchema,
  recentDeliveries,
} from './outbox.ts';

/** The admin outbox: mail the local SMTP server received, and the app's delivery attempts. */
export function outboxRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/admin/outbox', requireRole('admin'), async (req, res) => {
    const { page } = outboxListQuerySchema.parse(req.query);
    const organisationId = req.user!.organisationId;
    const [outbox, deliveries] = await Promise.all([
      listOutbox(services.db, organisationId, page),
      recentDeliveries(services.db, organisationId),
    ]);
    renderPage(req, res, 'outbox', {
      title: 'Outbox',
      outbox,
      deliveries,
      transport: describeSmtpUrl(mailTransportSettings().url),
      previousPage: outbox.page > 1 ? outbox.page - 1 : null,
      nextPage: outbox.page < outbox.pageCount ? outbox.page + 1 : null,
    });
  });

  router.get('/admin/outbox/:id', requireRole('admin'), async (req, res) => {
    const { id } = outboxMessageParamSchema.parse(req.params);
    if (!hasLocalOutbox())
      throw new HttpError(404, 'Mail goes to a real SMTP server here; there is no local outbox.');
    const message = await getOutboxMessage(services.db, req.user!.organisationId, id);
    renderPage(req, res, 'outbox-message', { title: `Message: ${message.subject}`, message });
  });

  return router;
}
