import { z } from 'zod';

/** GET /api/activity?limit=N — the caller's own audit events, newest first. */
export const activityQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(20),
});
export type ActivityQuery = z.infer<typeof activityQuerySchema>;

export const activityEntrySchema = z.object({
  id: z.number().int(),
  occurredAt: z.string(),
  action: z.string(),
  /** The event in plain words (the code stays in `action`). */
  summary: z.string(),
  recordType: z.string().nullable(),
  recordId: z.string().nullable(),
});
export const activityResponseSchema = z.object({ events: z.array(activityEntrySchema) });
export type ActivityResponse = z.infer<typeof activityResponseSchema>;
