import { type ErrorRequestHandler, type Request, type RequestHandler, Router } from 'express';
import { z } from 'zod';
import { recordIdSchema } from '../../../shared/api/studies.ts';
import {
  readTemperatureLogForm,
  TEMPERATURE_LOG_FIELDS,
  type TemperatureLogField,
} from '../../../shared/api/temperature-logs.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { receiveOneFile } from '../intake/index.ts';
import { createReportVersion, openRenderQueue } from '../reports/index.ts';
import { listStudies } from '../studies/index.ts';
import {
  attachableReports,
  createTemperatureLogAssessment,
  findTemperatureLogAssessment,
  latestAttachments,
  listTemperatureLogAssessments,
  reportsOfAssessment,
  type StoredTemperatureLogResult,
  StudyImpactRefused,
  TemperatureLogRefused,
} from './temperature-log-assessments.ts';
import { assessmentView, FORM_DEFAULTS, formView, impactView } from './temperature-log-view.ts';

const READERS = ['analyst', 'reviewer', 'admin'] as const;

/** POST /temperature-logs/:id/attach: the report whose next version prints the assessment. */
const attachRequestSchema = z.object({
  reportId: z.coerce
    .number({ error: 'Choose a report from the list.' })
    .int()
    .positive('Choose a report from the list.'),
});

function postedValues(req: Request): Partial<Record<TemperatureLogField, string>> {
  const body = (req.body ?? {}) as Record<string, unknown>;
  const values: Partial<Record<TemperatureLogField, string>> = {};
  for (const name of TEMPERATURE_LOG_FIELDS) {
    const value = body[name];
    if (typeof value === 'string') values[name] = value.slice(0, 500);
  }
  return values;
}

async function showForm(
  services: AppServices,
  req: Request,
  res: Parameters<RequestHandler>[1],
  values: Partial<Record<TemperatureLogField, string>>,
  errors: Partial<Record<string, string>>,
  problems: string[] = [],
  status = 200,
) {
  const studies = await listStudies(services.db, req.user!.organisationId);
  renderPage(
    req,
    res,
    'temperature-log-new',
    {
      title: 'Assess a temperature log',
      ...formView(values, errors, studies),
      problems,
      reupload: status !== 200,
    },
    status,
  );
}

/**
 * Temperature-log assessments: the list, the upload form (a plain multipart form, no script
 * needed), the stored assessment, its original file and its JSON document.
 *
 * Mounted before the app's global CSRF check, because that check runs before a multipart body is
 * read: the form's route runs role → bounded read (`receiveOneFile`, the study upload's limits) →
 * the same CSRF check (`protect`) → the assessment. Every refusal is the form again with a clear
 * 4xx status and the values typed so far, never a 500; nothing is stored unless all is well.
 */
export function temperatureLogRoutes(services: AppServices, protect: RequestHandler): Router {
  const router = Router();

  router.get('/temperature-logs', requireRole(...READERS), async (req, res) => {
    const rows = await listTemperatureLogAssessments(services.db, req.user!.organisationId);
    renderPage(req, res, 'temperature-logs', {
      title: 'Temperature logs',
      canCreate: req.user!.roles.includes('analyst'),
      assessments: rows.map((row) => ({
        ...row,
        mkt: `${row.mktC.toFixed(2)} °C`,
        max: `${row.maxC.toFixed(2)} °C`,
      })),
    });
  });

  router.get('/temperature-logs/new', requireRole('analyst'), async (req, res) => {
    await showForm(services, req, res, FORM_DEFAULTS, {});
  });

  const refusal: ErrorRequestHandler = (error, req, res, next) => {
    if (error instanceof StudyImpactRefused) {
      const values = { ...FORM_DEFAULTS, ...postedValues(req) };
      return showForm(services, req, res, values, { [error.field]: error.message }, [], 422).catch(next);
    }
    if (!(error instanceof HttpError) || error.status >= 500) return next(error);
    const problems = error instanceof TemperatureLogRefused ? error.problems : [error.message];
    showForm(
      services,
      req,
      res,
      { ...FORM_DEFAULTS, ...postedValues(req) },
      {},
      problems,
      error.status,
    ).catch(next);
  };

  const assess: RequestHandler = async (req, res) => {
    const values = postedValues(req);
    const form = readTemperatureLogForm(req.body ?? {});
    if (!form.ok) return showForm(services, req, res, values, form.errors, [], 400);
    if (!req.file || req.file.size === 0) {
      return showForm(
        services,
        req,
        res,
        values,
        {},
        ['Choose the logger file (CSV or XLSX) to assess.'],
        400,
      );
    }
    const fileName = Buffer.from(req.file.originalname, 'latin1').toString('utf8').slice(0, 255) || 'log';
    const created = await createTemperatureLogAssessment(
      services.db,
      req.user!,
      {
        title: form.title,
        file: { fileName, mediaType: req.file.mimetype, bytes: req.file.buffer },
        mapping: form.mapping,
        settings: form.settings,
        ...(form.studyId === undefined ? {} : { studyId: form.studyId }),
        ...(form.latestValue === undefined ? {} : { latestValue: form.latestValue }),
      },
      auditContext(req),
    );
    res.redirect(303, `/temperature-logs/${created.id}?saved=1`);
  };

  // The form's fields and its CSRF token, and no more.
  const receive = receiveOneFile(TEMPERATURE_LOG_FIELDS.length + 1);
  router.post('/temperature-logs', requireRole('analyst'), receive, protect, assess, refusal);

  router.get('/temperature-logs/:id', requireRole(...READERS), async (req, res) => {
    const id = recordIdSchema.parse(req.params.id);
    const record = await findTemperatureLogAssessment(services.db, req.user!.organisationId, id);
    const document = record.result as StoredTemperatureLogResult;
    const attachedTo = await reportsOfAssessment(services.db, req.user!.organisationId, id);
    const canAttach = req.user!.roles.includes('analyst');
    const reportChoices = canAttach ? await attachableReports(services.db, req.user!.organisationId) : [];
    renderPage(req, res, 'temperature-log', {
      title: record.title,
      saved: req.query.saved === '1',
      record: {
        id: record.id,
        title: record.title,
        fileName: record.fileName,
        sha256: record.sha256,
        sizeBytes: record.sizeBytes,
        createdAt: record.createdAt,
        createdByName: record.createdByName,
        engineVersion: record.engineVersion,
      },
      figureSvg: record.figureSvg,
      ...assessmentView(document),
      impact: impactView(document.impact ?? null),
      attachedTo,
      canAttach,
      reportChoices,
    });
  });

  // A plain form (not multipart): the body is already read, so the CSRF check runs at once.
  const queue = openRenderQueue({ config: services.renderConfig, pool: services.pool, supervise: false });
  router.post('/temperature-logs/:id/attach', requireRole('analyst'), protect, async (req, res) => {
    const id = recordIdSchema.parse(req.params.id);
    await findTemperatureLogAssessment(services.db, req.user!.organisationId, id);
    const { reportId } = attachRequestSchema.parse(req.body ?? {});
    const attached = await latestAttachments(services.db, reportId);
    const created = await createReportVersion(
      services.db,
      queue,
      req.user!,
      reportId,
      { temperatureLogIds: attached.includes(id) ? attached : [...attached, id] },
      auditContext(req),
    );
    res.redirect(303, `/app/reports/${created.reportId}?version=${created.versionNumber}`);
  });

  router.get('/temperature-logs/:id/original', requireRole(...READERS), async (req, res) => {
    const id = recordIdSchema.parse(req.params.id);
    const record = await findTemperatureLogAssessment(services.db, req.user!.organisationId, id);
    const type =
      record.format === 'csv'
        ? 'text/csv'
        : 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
    res.set('content-type', type);
    res.attachment(record.fileName);
    res.set('x-content-type-options', 'nosniff');
    res.send(record.content);
  });

  router.get('/temperature-logs/:id/assessment.json', requireRole(...READERS), async (req, res) => {
    const id = recordIdSchema.parse(req.params.id);
    const record = await findTemperatureLogAssessment(services.db, req.user!.organisationId, id);
    res.attachment(`temperature-log-${record.id}.json`);
    res.json({
      id: record.id,
      title: record.title,
      sha256: record.sha256,
      engineVersion: record.engineVersion,
      createdAt: record.createdAt.toISOString(),
      settings: record.settings,
      mapping: record.mapping,
      result: record.result,
    });
  });

  return router;
}
