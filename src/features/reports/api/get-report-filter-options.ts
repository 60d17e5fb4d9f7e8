import { queryOptions, useQuery } from '@tanstack/react-query';
import { reportFilterOptionsSchema } from '../../../../shared/api/reports.ts';
import { fetchJson } from '../../../lib/http.ts';
import { reportKeys } from './report-keys.ts';

/** GET /api/reports/filter-options: the studies and authors the list can be filtered by. */
export function getReportFilterOptions() {
  return fetchJson('/api/reports/filter-options', reportFilterOptionsSchema);
}

export const reportFilterOptionsQueryOptions = () =>
  queryOptions({ queryKey: reportKeys.filterOptions(), queryFn: getReportFilterOptions });

export function useReportFilterOptions() {
  return useQuery(reportFilterOptionsQueryOptions());
}
