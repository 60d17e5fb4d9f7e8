import { z } from 'zod';

export const roleSchema = z.enum(['analyst', 'reviewer', 'admin']);
export type Role = z.infer<typeof roleSchema>;
export const ROLES: readonly Role[] = roleSchema.options;

/** The signed-in person as every request sees it; loaded fresh from the database per request. */
export interface SessionUser {
  id: number;
  email: string;
  fullName: string;
  organisationId: number;
  organisationName: string;
  roles: Role[];
}
