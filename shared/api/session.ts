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
