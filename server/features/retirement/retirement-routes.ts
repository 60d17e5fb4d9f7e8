import { Router } from 'express';
import { z } from 'zod';
import { recordIdSchema } from '../../../shared/api/studies.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { findRetirable, mayRetire, type RetirableType, retirementOf, retireRecord } from './retirement.ts';

/** The word in the address for each kind of record. */
const PATH_TYPES: Record<string, RetirableType> = {
  dataset: 'dataset',
  analysis: 'analysis_run',
  report: 'report',
};
const API_PATHS: [string, RetirableType][] = [
  ['/api/datasets/:id/retire', 'dataset'],
  ['/api/analyses/:id/retire', 'analysis_run'],
  ['/api/reports/:id/retire', 'report'],
];

const retireRequestSchema = z.object({
  reason: z.string().max(2000, 'The reason can be at most 2000 characters.'),
});

function typeOf(word: unknown): RetirableType {
  const type = typeof word === 'string' ? PATH_TYPES[word] : undefined;
  if (!type) throw new HttpError(404, 'Only a dataset, an analysis or a report can be retired.');
  return type;
}

/** Retiring a record made by mistake: the API for islands and tests, and a form page. */
export function retirementRoutes(services: AppServices): Router {
  const router = Router();

  for (const [path, type] of API_PATHS) {
    router.post(path, requireRole('analyst', 'admin'), async (req, res) => {
      const id = recordIdSchema.parse(req.params.id);
      const { reason } = retireRequestSchema.parse(req.body ?? {});
      const retired = await retireRecord(services.db, req.user!, { type, id, reason }, auditContext(req));
      res.status(201).json({
        recordType: type,
        recordId: id,
        reason: retired.reason,
        retiredAt: retired.retiredAt.toISOString(),
        retiredBy: retired.retiredBy,
      });
    });
  }

  router.get('/retire/:type/:id', requireRole('analyst', 'admin'), async (req, res) => {
    const type = typeOf(req.params.type);
    const id = recordIdSchema.parse(req.params.id);
    const record = await findRetirable(services.db, req.user!.organisationId, type, id);
    if (!mayRetire(req.user!, record))
      throw new HttpError(
        403,
        `Only the analyst who made ${record.label.toLowerCase()} or an admin can retire it.`,
      );
    const retirement = await retirementOf(services.db, req.user!.organisationId, type, id);
    renderPage(req, res, 'retire', {
      title: `Retire ${record.label}`,
      record,
      retirement,
      reason: '',
      error: '',
    });
  });

  router.post('/retire/:type/:id', requireRole('analyst', 'admin'), async (req, res) => {
    const type = typeOf(req.params.type);
    const id = recordIdSchema.parse(req.params.id);
    const reason = typeof req.body?.reason === 'string' ? req.body.reason : '';
    try {
      const retired = await retireRecord(services.db, req.user!, { type, id, reason }, auditContext(req));
      res.redirect(303, `${retired.url}${retired.url.includes('?') ? '&' : '?'}retired=1`);
    } catch (error) {
      if (!(error instanceof HttpError) || error.status === 404 || error.status >= 500) throw error;
      const record = await findRetirable(services.db, req.user!.organisationId, type, id);
      const retirement = await retirementOf(services.db, req.user!.organisationId, type, id);
      renderPage(
        req,
        res,
        'retire',
        { title: `Retire ${record.label}`, record, retirement, reason, error: error.message },
        error.status,
      );
    }
  });

  return router;
}
