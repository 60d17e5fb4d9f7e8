import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { type ReportListQuery, reportListResponseSchema } from '../../../../shared/api/reports.ts';
import { fetchJson } from '../../../lib/http.ts';
import { isRendering, RENDER_POLL_MS, reportKeys } from './report-keys.ts';

/** GET /api/reports: one page of the organisation's reports with the filters applied. */
export function listReports(query: ReportListQuery) {
  const params = new URLSearchParams();
  for (const [name, value] of Object.entries(query)) {
    if (value !== undefined && value !== null && value !== '') params.set(name, String(value));
  }
  return fetchJson(`/api/reports?${params}`, reportListResponseSchema);
}

/** Refreshes every second while a report on the page is still queued or rendering. */
export const reportListQueryOptions = (query: ReportListQuery) =>
  queryOptions({
    queryKey: reportKeys.list(query),
    queryFn: () => listReports(query),
    placeholderData: keepPreviousData,
    refetchInterval: (current) =>
      current.state.data?.items.some((item) => isRendering(item.latest.renderStatus))
        ? RENDER_POLL_MS
        : false,
  });

export function useReportList(query: ReportListQuery) {
  return useQuery(reportListQueryOptions(query));
}
