import { Router } from 'express';
import type { AppServices } from '../../platform/app-services.ts';
import { signedIn } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { dashboardPanels } from './dashboard.ts';
import { recentReports } from './recent-reports.ts';

export function pageRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/', signedIn(), async (req, res) => {
    renderPage(req, res, 'dashboard', {
      title: 'Dashboard',
      panels: dashboardPanels(req.user!.roles),
      reports: await recentReports(services.db, req.user!.organisationId),
    });
  });

  // The client section: React Router takes over below /app.
  router.get(['/app', '/app/{*rest}'], signedIn(), (req, res) => {
    // Each page of the section sets its own title once it has loaded (src/app/client-app.tsx).
    renderPage(req, res, 'client-app', { title: 'Reports and activity' });
  });

  return router;
}
