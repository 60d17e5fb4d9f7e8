import { Router } from 'express';
import type { AppServices } from '../app-services.ts';
import { publicRoute } from '../auth/route-policy.ts';

export function healthRoutes(services: AppServices): Router {
  const router = Router();
  /** Load-balancer probe: 200 when the database answers, 503 when it does not. */
  router.get('/healthz', publicRoute(), async (_req, res) => {
    try {
      await services.pool.query('select 1');
      res.json({ status: 'ok', database: 'reachable' });
    } catch {
      res.status(503).json({ status: 'degraded', database: 'unreachable' });
    }
  });
  return router;
}
