import { type Response, Router } from 'express';
import {
  decidePublicationRequestSchema,
  publicationParamSchema,
} from '../../../shared/api/template-publication.ts';
import {
  publishTemplateVersionRequestSchema,
  saveTemplateVersionRequestSchema,
  templateDiffQuerySchema,
  templateIdParamSchema,
  templatePreviewRequestSchema,
  templateVersionParamSchema,
} from '../../../shared/api/templates.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { loadOrganisationSettings } from '../settings/index.ts';
import {
  diffTemplateVersions,
  getTemplateEditor,
  getTemplateSummary,
  getTemplateVersion,
  listTemplates,
  saveTemplateVersion,
} from './template-editor.ts';
import { previewTemplate } from './template-editor-preview.ts';
import { decidePublication, listPendingPublications, publishVersion } from './template-publication.ts';

/**
 * The report template editor (admin only, every route): the list of templates and versions, the
 * editor page with its island, and the island's API — preview, save a version, publish or roll
 * back (or propose it, and approve or refuse another admin's proposal), compare two versions.
 *
 * The editor page's policy differs from the app's in one directive: the live preview is an
 * `<iframe sandbox srcdoc>`, and a srcdoc document inherits the page's Content-Security-Policy,
 * so the report's own `<style>` needs `style-src 'unsafe-inline'` there. Scripts stay
 * `script-src 'self'` (the preview's inline scripts cannot run; the server strips them anyway,
 * and the sandbox has no `allow-scripts`).
 */

const admin = () => requireRole('admin');

function allowInlineStylesForPreview(res: Response) {
  const policy = res.getHeader('content-security-policy');
  if (typeof policy === 'string') {
    res.setHeader(
      'content-security-policy',
      policy.replace(/style-src 'self'(?! 'unsafe-inline')/, "style-src 'self' 'unsafe-inline'"),
    );
  }
}

export function templateAdminRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;

  router.get('/admin/templates', admin(), async (req, res) => {
    const templates = await listTemplates(db, req.user!.organisationId);
    const settings = await loadOrganisationSettings(db, req.user!.organisationId);
    renderPage(req, res, 'admin-templates', {
      title: 'Report templates',
      needsSecondAdmin: settings.templatePublicationNeedsSecondAdmin,
      templates: templates.map((template) => ({
        ...template,
        versions: template.versions.map((version) => ({ ...version, shortSha: version.sha256.slice(0, 12) })),
      })),
    });
  });

  router.get('/admin/templates/:id/edit', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    const template = await getTemplateSummary(db, req.user!.organisationId, id);
    allowInlineStylesForPreview(res);
    renderPage(req, res, 'admin-templates-edit', { title: `Edit ${template.name}`, template });
  });

  router.get('/api/admin/templates', admin(), async (req, res) => {
    res
      .set('cache-control', 'no-store')
      .json({ templates: await listTemplates(db, req.user!.organisationId) });
  });

  router.post('/api/admin/templates/preview', admin(), async (req, res) => {
    const request = templatePreviewRequestSchema.parse(req.body ?? {});
    res.set('cache-control', 'no-store').json(await previewTemplate(db, req.user!, request));
  });

  router.get('/api/admin/templates/:id', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    res.set('cache-control', 'no-store').json(await getTemplateEditor(db, req.user!.organisationId, id));
  });

  router.get('/api/admin/templates/:id/versions/:versionId', admin(), async (req, res) => {
    const { id, versionId } = templateVersionParamSchema.parse(req.params);
    res.json(await getTemplateVersion(db, req.user!.organisationId, id, versionId));
  });

  router.post('/api/admin/templates/:id/versions', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    const request = saveTemplateVersionRequestSchema.parse(req.body ?? {});
    const version = await saveTemplateVersion(db, req.user!, id, request);
    res.status(201).json({ version });
  });

  router.post('/api/admin/templates/:id/publish', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    const { versionId, reason } = publishTemplateVersionRequestSchema.parse(req.body ?? {});
    res.json(await publishVersion(db, req.user!, id, versionId, reason));
  });

  router.get('/api/admin/templates/:id/publications', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    res.set('cache-control', 'no-store').json(await listPendingPublications(db, req.user!, id));
  });

  router.post('/api/admin/templates/:id/publications/:requestId/decision', admin(), async (req, res) => {
    const { id, requestId } = publicationParamSchema.parse(req.params);
    const { decision, reason } = decidePublicationRequestSchema.parse(req.body ?? {});
    res.json(await decidePublication(db, req.user!, id, requestId, decision, reason));
  });

  router.get('/api/admin/templates/:id/diff', admin(), async (req, res) => {
    const { id } = templateIdParamSchema.parse(req.params);
    const { from, to } = templateDiffQuerySchema.parse(req.query);
    res.json(await diffTemplateVersions(db, req.user!.organisationId, id, from, to));
  });

  return router;
}
