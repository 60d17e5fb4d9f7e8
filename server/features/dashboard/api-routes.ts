import { desc, eq } from 'drizzle-orm';
import { Router } from 'express';
import { type ActivityResponse, activityQuerySchema } from '../../../shared/api/activity.ts';
import type { MeResponse } from '../../../shared/api/session.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { signedIn } from '../../platform/auth/route-policy.ts';
import { auditEvents } from '../../platform/db/schema/index.ts';
import { activityInWords } from './activity-words.ts';

export function apiRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/api/me', signedIn(), (req, res) => {
    const user = req.user!;
    const body: MeResponse = { ...user };
    res.json(body);
  });

  router.get('/api/activity', signedIn(), async (req, res) => {
    const query = activityQuerySchema.parse(req.query);
    const rows = await services.db
      .select({
        id: auditEvents.id,
        occurredAt: auditEvents.occurredAt,
        action: auditEvents.action,
        recordType: auditEvents.recordType,
        recordId: auditEvents.recordId,
        before: auditEvents.beforeValue,
        after: auditEvents.afterValue,
      })
      .from(auditEvents)
      .where(eq(auditEvents.actorUserId, req.user!.id))
      .orderBy(desc(auditEvents.id))
      .limit(query.limit);
    const body: ActivityResponse = {
      events: rows.map(({ before, after, ...row }) => ({
        ...row,
        summary: activityInWords({ ...row, before, after }),
        occurredAt: row.occurredAt.toISOString(),
      })),
    };
    res.json(body);
  });

  return router;
}
