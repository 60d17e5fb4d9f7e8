import { queryOptions, useQuery } from '@tanstack/react-query';
import { type ActivityQuery, activityResponseSchema } from '../../../../shared/api/activity.ts';
import { fetchJson } from '../../../lib/http.ts';

export function getActivity(query: ActivityQuery) {
  return fetchJson(`/api/activity?limit=${query.limit}`, activityResponseSchema);
}

/** Owns the query key: mutations that add audit events invalidate through `activityQueryOptions`. */
export const activityQueryOptions = (query: ActivityQuery) =>
  queryOptions({ queryKey: ['activity', query], queryFn: () => getActivity(query) });

export function useActivity(query: ActivityQuery) {
  return useQuery(activityQueryOptions(query));
}
