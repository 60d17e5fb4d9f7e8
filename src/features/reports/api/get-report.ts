import { queryOptions, skipToken, useQuery } from '@tanstack/react-query';
import { reportDetailSchema } from '../../../../shared/api/reports.ts';
import { fetchJson } from '../../../lib/http.ts';
import { isRendering, RENDER_POLL_MS, reportKeys } from './report-keys.ts';

/** GET /api/reports/:id: the report with every version and its render state. */
export function getReport(reportId: number) {
  return fetchJson(`/api/reports/${reportId}`, reportDetailSchema);
}

/**
 * Polls while any version is queued or rendering, so the state updates as the render runs. An id
 * that is no report id (from a hand-typed URL) is not fetched.
 */
export const reportQueryOptions = (reportId: number) =>
  queryOptions({
    queryKey: reportKeys.detail(reportId),
    queryFn: Number.isInteger(reportId) && reportId > 0 ? () => getReport(reportId) : skipToken,
    staleTime: 0,
    refetchInterval: (current) =>
      current.state.data?.versions.some((version) => isRendering(version.renderStatus))
        ? RENDER_POLL_MS
        : false,
  });

export function useReport(reportId: number) {
  return useQuery(reportQueryOptions(reportId));
}
