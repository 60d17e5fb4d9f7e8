import { type Request, type Response, Router } from 'express';
import {
  type CreateReportResponse,
  createReportRequestSchema,
  createReportVersionRequestSchema,
  reportIdParamSchema,
  reportListQuerySchema,
  reportVersionParamSchema,
  runIdParamSchema,
} from '../../../shared/api/reports.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { sendPdf } from '../../platform/http/pdf-response.ts';
import { openRenderQueue } from './queue/render-queue.ts';
import { type PdfKind, versionHtml, versionPdf } from './report-download.ts';
import { getReportDetail, listReports, reportFilterOptions } from './report-history.ts';
import { withRecordStanding } from './report-record-standing.ts';
import { type CreatedReport, createReport, createReportVersion } from './reports.ts';

const READERS = ['analyst', 'reviewer', 'admin'] as const;

/**
 * The report preview is the stored HTML exactly as printed. It is served with a policy of its own:
 * no script of any kind, nothing loaded from anywhere but inline `data:` fonts and images, and a
 * sandbox, so even a template that smuggled markup in could not act in the user's session.
 */
const PREVIEW_CSP = [
  "default-src 'none'",
  "script-src 'none'",
  "style-src 'unsafe-inline'",
  'img-src data:',
  'font-src data:',
  "base-uri 'none'",
  "form-action 'none'",
  "frame-ancestors 'self'",
  'sandbox',
].join('; ');

const created = (report: CreatedReport): CreateReportResponse => ({
  reportId: report.reportId,
  reportNumber: report.reportNumber,
  versionNumber: report.versionNumber,
  renderStatus: 'queued',
});

export function reportRoutes(services: AppServices): Router {
  const router = Router();
  const { renderConfig: config, storage } = services;
  // The web process only sends jobs, through the app's own pool and its transactions.
  const queue = openRenderQueue({ config, pool: services.pool, supervise: false });

  router.post('/api/analyses/:runId/reports', requireRole('analyst'), async (req, res) => {
    const { runId } = runIdParamSchema.parse(req.params);
    const request = createReportRequestSchema.parse(req.body ?? {});
    const report = await createReport(services.db, queue, req.user!, runId, request, auditContext(req));
    res.status(201).location(`/app/reports/${report.reportId}`).json(created(report));
  });

  // The "Create report" form on the analysis page (works without JavaScript).
  router.post('/analyses/:runId/reports', requireRole('analyst'), async (req, res) => {
    const { runId } = runIdParamSchema.parse(req.params);
    const request = createReportRequestSchema.parse(req.body ?? {});
    const report = await createReport(services.db, queue, req.user!, runId, request, auditContext(req));
    res.redirect(303, `/app/reports/${report.reportId}`);
  });

  router.post('/api/reports/:id/versions', requireRole('analyst'), async (req, res) => {
    const { id } = reportIdParamSchema.parse(req.params);
    const request = createReportVersionRequestSchema.parse(req.body ?? {});
    const report = await createReportVersion(services.db, queue, req.user!, id, request, auditContext(req));
    res.status(201).json(created(report));
  });

  router.get('/api/reports', requireRole(...READERS), async (req, res) => {
    const query = reportListQuerySchema.parse(req.query);
    res.json(await listReports(services.db, req.user!.organisationId, query));
  });

  router.get('/api/reports/filter-options', requireRole(...READERS), async (req, res) => {
    res.json(await reportFilterOptions(services.db, req.user!.organisationId));
  });

  router.get('/api/reports/:id', requireRole(...READERS), async (req, res) => {
    const { id } = reportIdParamSchema.parse(req.params);
    res
      .set('cache-control', 'no-store')
      .json(
        await withRecordStanding(
          services.db,
          req.user!.organisationId,
          await getReportDetail(services.db, req.user!.organisationId, id),
        ),
      );
  });

  /** The version's PDF (sealed once signed, so no longer immutable under one URL) or its rendition. */
  const pdfRoute = (kind: PdfKind) => async (req: Request, res: Response) => {
    const { id, version } = reportVersionParamSchema.parse(req.params);
    const file = await versionPdf({
      db: services.db,
      storage,
      organisationId: req.user!.organisationId,
      reportId: id,
      versionNumber: version,
      requestId: req.id ?? null,
      kind,
    });
    sendPdf(res, file, { disposition: 'attachment', immutable: kind === 'rendition' });
  };
  router.get('/api/reports/:id/versions/:version/pdf', requireRole(...READERS), pdfRoute('current'));
  router.get(
    '/api/reports/:id/versions/:version/rendition.pdf',
    requireRole(...READERS),
    pdfRoute('rendition'),
  );

  router.get('/api/reports/:id/versions/:version/html', requireRole(...READERS), async (req, res) => {
    const { id, version } = reportVersionParamSchema.parse(req.params);
    const page = await versionHtml({
      db: services.db,
      organisationId: req.user!.organisationId,
      reportId: id,
      versionNumber: version,
    });
    res
      .set({
        'content-type': 'text/html; charset=utf-8',
        'content-security-policy': PREVIEW_CSP,
        'content-disposition': `inline; filename="${page.fileName}"`,
        'cache-control': 'private, no-cache',
      })
      .send(page.html);
  });

  return router;
}
