import { Router } from 'express';
import { signedIn } from '../auth/route-policy.ts';
import type { AppServices } from '../services/app-services.ts';
import { dashboardPanels } from '../services/dashboard.ts';
import { renderPage } from '../web/render-page.ts';

export function pageRoutes(_services: AppServices): Router {
  const router = Router();

  router.get('/', signedIn(), (req, res) => {
    renderPage(req, res, 'dashboard', { title: 'Dashboard', panels: dashboardPanels(req.user!.roles) });
  });

  // The client section: React Router takes over below /app.
  router.get(['/app', '/app/{*rest}'], signedIn(), (req, res) => {
    renderPage(req, res, 'client-app', { title: 'Rateledger' });
  });

  return router;
}
