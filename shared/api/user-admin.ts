/**
 * People and roles: the forms an administrator posts on `/admin/people` (invite, set roles) and
 * the forms an invitee or a person resetting their password posts on the public token pages. The
 * password rules themselves (length, character classes, common passwords) depend on the
 * organisation's policy and are checked on the server (`server/features/settings/password-policy.ts`).
 *
 * Example: `inviteFormSchema.parse({ fullName: 'Rhea Reviewer', email: 'Rhea@Lab.example',
 * roles: 'reviewer' })` → `{ fullName: 'Rhea Reviewer', email: 'rhea@lab.example', roles: ['reviewer'] }`.
 */
import { z } from 'zod';

/** The duties of the product, as the server's `Role` (server/platform/auth/roles.ts). */
export const MEMBER_ROLES = ['analyst', 'reviewer', 'admin'] as const;
export type MemberRole = (typeof MEMBER_ROLES)[number];

export const ROLE_DESCRIPTIONS: Record<MemberRole, string> = {
  analyst: 'Creates studies, uploads data, runs analyses and drafts reports.',
  reviewer: 'Reviews reports drafted by others; returns them or signs them.',
  admin: 'Manages people, roles, templates and the organisation’s settings.',
};

/** The longest password accepted at all (hashing cost stays bounded); policies ask for less. */
export const MAX_PASSWORD_LENGTH = 256;

const roleList = z.preprocess(
  (raw) => (raw === undefined || raw === null || raw === '' ? [] : Array.isArray(raw) ? raw : [raw]),
  z
    .array(z.enum(MEMBER_ROLES, { error: 'Choose analyst, reviewer or admin.' }))
    .min(1, 'Choose at least one role. To stop someone signing in, deactivate the account instead.')
    .transform((roles) => MEMBER_ROLES.filter((role) => roles.includes(role))),
);

export const inviteFormSchema = z
  .object({
    fullName: z
      .string({ error: 'The full name is required.' })
      .trim()
      .min(1, 'The full name is required: it is printed with every signature (21 CFR 11.50).')
      .max(200, 'The full name can be at most 200 characters.'),
    email: z
      .string({ error: 'The e-mail address is required.' })
      .trim()
      .toLowerCase()
      .pipe(z.email('This is not an e-mail address, e.g. name@laboratory.example.').max(254)),
    roles: roleList,
    /** The admin's confirmation that the person may e-sign records; needed when reviewer is chosen. */
    confirmSigningRole: z.preprocess((raw) => raw === 'yes' || raw === true, z.boolean()),
  })
  .refine((form) => !form.roles.includes('reviewer') || form.confirmSigningRole, {
    path: ['confirmSigningRole'],
    message:
      'Reviewer is a signing role: confirm that this person may e-sign records on behalf of the organisation, or untick reviewer.',
  });
export type InviteInput = z.output<typeof inviteFormSchema>;

export const rolesFormSchema = z.object({ roles: roleList });

/** A new password typed twice (invitation accept, password reset). */
export const newPasswordFormSchema = z
  .object({
    password: z
      .string({ error: 'Choose a password.' })
      .min(1, 'Choose a password.')
      .max(MAX_PASSWORD_LENGTH, `A password can be at most ${MAX_PASSWORD_LENGTH} characters.`),
    confirmPassword: z.string().default(''),
  })
  .refine((form) => form.password === form.confirmPassword, {
    path: ['confirmPassword'],
    message: 'The two passwords are not the same.',
  });

/** The one-time token in an invitation or reset link: 32 random bytes, base64url. */
export const linkTokenSchema = z.string().regex(/^[A-Za-z0-9_-]{43}$/, 'This link is not complete.');

/** What `GET /api/admin/people` answers. */
export interface MemberSummary {
  id: number;
  fullName: string;
  email: string;
  active: boolean;
  locked: boolean;
  lockedUntil: string | null;
  lastSignInAt: string | null;
  roles: MemberRole[];
}

export interface PendingInvitationSummary {
  id: number;
  email: string;
  fullName: string;
  roles: MemberRole[];
  expiresAt: string;
  invitedBy: string;
}

export interface PeopleResponse {
  people: MemberSummary[];
  invitations: PendingInvitationSummary[];
}
