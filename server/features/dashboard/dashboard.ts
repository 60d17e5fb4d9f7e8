import type { Role } from '../../platform/auth/roles.ts';

export interface DashboardPanel {
  role: Role;
  heading: string;
  summary: string;
  links: { href: string; label: string }[];
}

/** One panel per role the user holds, in the order the work flows: analyse, review, administer. */
export function dashboardPanels(roles: readonly Role[]): DashboardPanel[] {
  const panels: Record<Role, DashboardPanel> = {
    analyst: {
      role: 'analyst',
      heading: 'Analyst',
      summary: 'Bring stability data, determine the degradation kinetics and draft the report.',
      links: [
        { href: '/studies', label: 'Studies: upload a workbook, map columns, analyse' },
        { href: '/studies/new', label: 'New study' },
        { href: '/app/activity', label: 'My recorded activity' },
      ],
    },
    reviewer: {
      role: 'reviewer',
      heading: 'Reviewer',
      summary: 'Check analyses and reports drafted by others; return them with a comment or sign them.',
      links: [
        { href: '/review', label: 'Waiting for my review' },
        { href: '/verify', label: 'Verify a signed PDF' },
        { href: '/app/activity', label: 'My recorded activity' },
        { href: '/audit', label: 'Audit trail: filter, export, check the chain' },
      ],
    },
    admin: {
      role: 'admin',
      heading: 'Administrator',
      summary: 'Keep the organisation’s people, roles, report templates and settings right.',
      links: [
        { href: '/admin/people', label: 'People and roles: invite, set roles, deactivate, unlock' },
        {
          href: '/admin/settings',
          label: 'Settings: signature meanings, defaults, report numbers, passwords',
        },
        { href: '/admin/outbox', label: 'Outbox: the mail Rateledger sent' },
        { href: '/admin/templates', label: 'Report templates: edit, preview, publish' },
        { href: '/audit', label: 'Audit trail: filter, export, check the chain' },
      ],
    },
  };
  return (['analyst', 'reviewer', 'admin'] as const)
    .filter((role) => roles.includes(role))
    .map((role) => panels[role]);
}
