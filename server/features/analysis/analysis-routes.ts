import { Router } from 'express';
import { ZodError } from 'zod';
import {
  type AnalysisFiguresResponse,
  analysisOptionsSchema,
  datasetIdParamSchema,
  excludePointRequestSchema,
  figuresQuerySchema,
  idParamSchema,
  type RunAnalysisResponse,
  runAnalysisRequestSchema,
} from '../../../shared/api/analyses.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { analysisCsv, exportFileName, writeAnalysisWorkbook } from './analysis-export.ts';
import { excludePoint, getAnalysisRun, runAnalysis } from './analysis-runs.ts';
import { analysisPageModel, runFigures } from './analysis-view.ts';
import { runRetirement } from './run-retirement.ts';

const READERS = ['analyst', 'reviewer', 'admin'] as const;

/** Analysis runs: run the engine, read a run, exclude a point (a new run), figures and exports. */
export function analysisRoutes(services: AppServices): Router {
  const router = Router();
  const actorOf = (user: Express.User) => ({ userId: user.id, label: user.fullName });

  router.post('/api/datasets/:datasetId/analyses', requireRole('analyst'), async (req, res) => {
    const { datasetId } = datasetIdParamSchema.parse(req.params);
    const body = runAnalysisRequestSchema.parse(req.body ?? {});
    const outcome: RunAnalysisResponse = await runAnalysis(services.db, {
      organisationId: req.user!.organisationId,
      datasetId,
      options: body.options,
      exclusions: body.exclusions,
      actor: actorOf(req.user!),
    });
    res.status(201).location(`/analyses/${outcome.runId}`).json(outcome);
  });

  router.get('/api/analyses/:id', requireRole(...READERS), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
    const { study: _study, ...rest } = run;
    res.json({ ...rest, runAt: run.runAt.toISOString() });
  });

  router.get('/api/analyses/:id/figures', requireRole(...READERS), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const { group } = figuresQuerySchema.parse(req.query);
    const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
    const figures = runFigures(run);
    const body: AnalysisFiguresResponse = {
      figures: group === undefined ? figures : figures.filter((figure) => figure.group === group),
    };
    res.set('cache-control', 'private, max-age=3600, immutable').json(body);
  });

  router.post('/api/analyses/:id/exclusions', requireRole('analyst'), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const request = excludePointRequestSchema.parse(req.body ?? {});
    const outcome: RunAnalysisResponse = await excludePoint(services.db, {
      organisationId: req.user!.organisationId,
      runId: id,
      request,
      actor: actorOf(req.user!),
    });
    res.status(201).location(`/analyses/${outcome.runId}`).json(outcome);
  });

  router.get('/api/analyses/:id/export.xlsx', requireRole(...READERS), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
    res
      .type('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
      .attachment(exportFileName(run, 'xlsx'));
    await writeAnalysisWorkbook(run, res);
  });

  router.get('/api/analyses/:id/export.csv', requireRole(...READERS), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
    res.type('text/csv; charset=utf-8').attachment(exportFileName(run, 'csv')).send(analysisCsv(run));
  });

  router.get('/analyses/:id', requireRole(...READERS), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
    renderPage(req, res, 'analysis', {
      ...analysisPageModel(run, req.user!.roles.includes('analyst')),
      ...(await runRetirement(services.db, req.user!, run)),
    });
  });

  // "Run again with other options" on the analysis page: same dataset and exclusions, new options.
  router.post('/analyses/:id/rerun', requireRole('analyst'), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const body = req.body as Record<string, unknown>;
    const earlier = await getAnalysisRun(services.db, req.user!.organisationId, id);
    const options = analysisOptionsSchema.parse({
      confidenceLevel: body.confidenceLevel,
      errorModel: body.errorModel,
      ...(body.order === '0' || body.order === '1' || body.order === '2'
        ? { order: Number(body.order) }
        : {}),
    });
    const outcome = await runAnalysis(services.db, {
      organisationId: req.user!.organisationId,
      datasetId: earlier.datasetId,
      options,
      exclusions: earlier.exclusions.map(({ seriesId, observationIndex, reason }) => ({
        seriesId,
        observationIndex,
        reason,
      })),
      actor: actorOf(req.user!),
      auditContext: { rerunOf: earlier.id },
    });
    res.redirect(303, `/analyses/${outcome.runId}`);
  });

  // The exclusion form on the analysis page (works without JavaScript); problems are shown beside the fields.
  router.post('/analyses/:id/exclusions', requireRole('analyst'), async (req, res) => {
    const { id } = idParamSchema.parse(req.params);
    const body = req.body as Record<string, unknown>;
    try {
      const earlier = await getAnalysisRun(services.db, req.user!.organisationId, id);
      const point =
        typeof body.point === 'string' && body.point !== ''
          ? body.point
          : `${body.series ?? ''}:${Number(body.observation) - 1}`;
      const [seriesIndex, observationIndex] = point.split(':');
      const seriesId = earlier.series[Number(seriesIndex)]?.id;
      if (seriesId === undefined || observationIndex === undefined) {
        throw new HttpError(400, 'Choose the point to exclude.', [
          { field: 'point', message: 'Choose the point to exclude.' },
        ]);
      }
      const request = excludePointRequestSchema.parse({ seriesId, observationIndex, reason: body.reason });
      const outcome = await excludePoint(services.db, {
        organisationId: req.user!.organisationId,
        runId: id,
        request,
        actor: actorOf(req.user!),
      });
      res.redirect(303, `/analyses/${outcome.runId}#exclusions`);
    } catch (error) {
      const problems =
        error instanceof ZodError
          ? error.issues.map((issue) => ({ field: String(issue.path[0] ?? ''), message: issue.message }))
          : error instanceof HttpError && error.status < 500
            ? [{ field: 'form', message: error.message }]
            : null;
      if (!problems) throw error;
      const run = await getAnalysisRun(services.db, req.user!.organisationId, id);
      const model = analysisPageModel(run, true, {
        problems,
        point: typeof body.point === 'string' ? body.point : '',
        reason: typeof body.reason === 'string' ? body.reason : '',
      });
      renderPage(req, res, 'analysis', model, error instanceof HttpError ? error.status : 400);
    }
  });

  return router;
}
