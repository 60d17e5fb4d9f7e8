import type { ReportListQuery } from '../../../../shared/api/reports.ts';

/** Query keys of the report history: every factory builds its key here, mutations invalidate by them. */
export const reportKeys = {
  all: ['reports'] as const,
  lists: () => [...reportKeys.all, 'list'] as const,
  list: (query: ReportListQuery) => [...reportKeys.lists(), query] as const,
  details: () => [...reportKeys.all, 'detail'] as const,
  detail: (reportId: number) => [...reportKeys.details(), reportId] as const,
  filterOptions: () => [...reportKeys.all, 'filter-options'] as const,
};

/** How often a view refreshes while a render it shows is queued or running. */
export const RENDER_POLL_MS = 1_000;

export const isRendering = (status: string) => status === 'queued' || status === 'rendering';
