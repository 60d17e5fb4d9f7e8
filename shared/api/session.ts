import { z } from 'zod';

/** GET /api/me — the signed-in person. Shared by the server (response) and islands (parsing). */
export const meResponseSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  fullName: z.string(),
  organisationId: z.number().int(),
  organisationName: z.string(),
  roles: z.array(z.enum(['analyst', 'reviewer', 'admin'])),
});
export type MeResponse = z.infer<typeof meResponseSchema>;

/**
 * POST /api/session/extend — "Stay signed in" before the idle sign-out: how long until the
 * session ends now. Shared by the server (response) and the warning script (parsing).
 */
export const sessionExtendResponseSchema = z.object({ signOutInMs: z.number().int().positive() });
export type SessionExtendResponse = z.infer<typeof sessionExtendResponseSchema>;
