import { Router } from 'express';
import { requireRole, signedIn } from '../auth/route-policy.ts';
import type { AppServices } from '../services/app-services.ts';
import { dashboardPanels } from '../services/dashboard.ts';
import { listPeople } from '../services/people.ts';
import { renderPage } from '../web/render-page.ts';

export function pageRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/', signedIn(), (req, res) => {
    renderPage(req, res, 'dashboard', { title: 'Dashboard', panels: dashboardPanels(req.user!.roles) });
  });

  router.get('/admin/people', requireRole('admin'), async (req, res) => {
    const people = await listPeople(services.db, req.user!.organisationId);
    renderPage(req, res, 'people', {
      title: 'People and roles',
      people: people.map((person) => ({
        ...person,
        roles: person.roles.join(', '),
        status: person.active ? 'active' : 'deactivated',
      })),
    });
  });

  // The client section: React Router takes over below /app.
  router.get(['/app', '/app/{*rest}'], signedIn(), (req, res) => {
    renderPage(req, res, 'client-app', { title: 'Rateledger' });
  });

  return router;
}
