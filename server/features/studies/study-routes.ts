import { type Request, type Response, Router } from 'express';
import { fieldErrors, recordIdSchema, studyFormSchema } from '../../../shared/api/studies.ts';
import { formatBytes, UPLOAD_SIZE_LIMIT_BYTES } from '../../../shared/api/uploads.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { createStudy, findStudy, listStudies, type Study, studyOverview, updateStudy } from './studies.ts';
import { declarationSummary } from './study-declaration-fields.ts';
import { formLocals, formValuesOf, groupAction, postedValues, regroupedValues } from './study-form-model.ts';
import { listedAttributes, studyPageAttributes } from './study-page-attributes.ts';
import { retiredRows } from './study-retired-rows.ts';
import { listStudyVersions, reasonRefusal } from './study-versions.ts';

/** Who may read studies: every duty of the product. Only analysts create and change them. */
const READERS = ['analyst', 'reviewer', 'admin'] as const;

/**
 * "Add another attribute" or "Remove" on the form: the form again with the groups changed and
 * everything typed kept, nothing saved or checked yet. Answers whether it did.
 */
function answerGroupAction(req: Request, res: Response, action: string, study?: Study): boolean {
  const requested = groupAction(req);
  if (!requested) return false;
  const { values, notice, focus } = regroupedValues(postedValues(req), requested);
  renderPage(req, res, 'study-form', formLocals(values, {}, action, study, { notice, focus }));
  return true;
}
const condition = (temperature: number | null, humidity: number | null) =>
  [temperature === null ? '' : `${temperature} °C`, humidity === null ? '' : `${humidity} % RH`]
    .filter(Boolean)
    .join(' / ') || 'not stated';

export function studyRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/studies', requireRole(...READERS), async (req, res) => {
    const rows = await listStudies(services.db, req.user!.organisationId);
    renderPage(req, res, 'studies', {
      title: 'Studies',
      canCreate: req.user!.roles.includes('analyst'),
      studies: rows.map((row) => ({
        ...row,
        ...listedAttributes(row),
        condition: condition(row.storageTemperatureC, row.storageHumidityPercent),
        batchCount: row.batches.length,
      })),
    });
  });

  router.get('/studies/new', requireRole('analyst'), (req, res) => {
    renderPage(
      req,
      res,
      'study-form',
      formLocals({ direction: 'decreasing', unit: '% of label claim' }, {}, '/studies'),
    );
  });

  router.post('/studies', requireRole('analyst'), async (req, res) => {
    if (answerGroupAction(req, res, '/studies')) return;
    const parsed = studyFormSchema.safeParse(req.body);
    if (!parsed.success) {
      return renderPage(
        req,
        res,
        'study-form',
        formLocals(postedValues(req), fieldErrors(parsed.error), '/studies'),
        400,
      );
    }
    const study = await createStudy(services.db, req.user!, parsed.data, auditContext(req));
    res.redirect(303, `/studies/${study.id}?saved=created`);
  });

  router.get('/studies/:studyId', requireRole(...READERS), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const overview = await studyOverview(services.db, req.user!.organisationId, studyId);
    const { study } = overview;
    const saved = typeof req.query.saved === 'string' ? req.query.saved : '';
    renderPage(req, res, 'study', {
      title: study.title,
      study,
      notice:
        {
          created: 'The study was created.',
          updated: 'Your changes were saved.',
          unchanged: 'Nothing had changed.',
        }[saved] ?? '',
      ...studyPageAttributes(study),
      condition: condition(study.storageTemperatureC, study.storageHumidityPercent),
      declaration: declarationSummary(study),
      canEdit: req.user!.roles.includes('analyst'),
      uploadLimit: formatBytes(UPLOAD_SIZE_LIMIT_BYTES),
      uploads: overview.uploads.map((upload) => ({
        ...upload,
        size: formatBytes(upload.sizeBytes),
        shortHash: upload.sha256.slice(0, 12),
      })),
      ...(await retiredRows(services.db, req.user!, overview, req.query.includeRetired === '1')),
      versions: await listStudyVersions(services.db, studyId),
    });
  });

  router.get('/studies/:studyId/edit', requireRole('analyst'), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const study = await findStudy(services.db, req.user!.organisationId, studyId);
    renderPage(req, res, 'study-form', formLocals(formValuesOf(study), {}, `/studies/${study.id}`, study));
  });

  router.post('/studies/:studyId', requireRole('analyst'), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const current = await findStudy(services.db, req.user!.organisationId, studyId);
    if (answerGroupAction(req, res, `/studies/${studyId}`, current)) return;
    const parsed = studyFormSchema.safeParse(req.body);
    if (!parsed.success) {
      const locals = formLocals(postedValues(req), fieldErrors(parsed.error), `/studies/${studyId}`, current);
      return renderPage(req, res, 'study-form', locals, 400);
    }
    const reason = typeof req.body?.reasonForChange === 'string' ? req.body.reasonForChange : '';
    let changed: string[];
    try {
      ({ changed } = await updateStudy(
        services.db,
        req.user!,
        studyId,
        parsed.data,
        reason,
        auditContext(req),
      ));
    } catch (error) {
      const refusal = reasonRefusal(error);
      if (!refusal) throw error;
      const locals = formLocals(postedValues(req), refusal, `/studies/${studyId}`, current);
      return renderPage(req, res, 'study-form', locals, 400);
    }
    res.redirect(303, `/studies/${studyId}?saved=${changed.length > 0 ? 'updated' : 'unchanged'}`);
  });

  return router;
}
