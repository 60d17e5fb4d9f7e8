import type { Role } from '../platform/auth/roles.ts';

/**
 * The invented demo organisation and its three accounts. Demo only: the passwords are printed
 * by `npm start` and listed in the README, so never use this seed on a production database.
 */
export const DEMO_ORGANISATION = {
  slug: 'brackenfold',
  name: 'Brackenfold Laboratories (demo)',
  timeZone: 'Europe/London',
} as const;

export interface DemoAccount {
  email: string;
  fullName: string;
  password: string;
  roles: Role[];
}

export const DEMO_ACCOUNTS: readonly DemoAccount[] = [
  {
    email: 'analyst@brackenfold.example',
    fullName: 'Demo Analyst',
    password: 'demo-analyst-2026',
    roles: ['analyst'],
  },
  {
    email: 'reviewer@brackenfold.example',
    fullName: 'Demo Reviewer',
    password: 'demo-reviewer-2026',
    roles: ['reviewer'],
  },
  {
    email: 'admin@brackenfold.example',
    fullName: 'Demo Administrator',
    password: 'demo-admin-2026',
    roles: ['admin'],
  },
];

export const DEMO_PASSWORDS_NOTE = [
  'Demo sign-ins (demo data only, not for production):',
  ...DEMO_ACCOUNTS.map(
    (account) => `  ${account.roles.join('+').padEnd(9)} ${account.email.padEnd(30)} ${account.password}`,
  ),
].join('\n');
