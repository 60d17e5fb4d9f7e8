import { queryOptions, useQuery } from '@tanstack/react-query';
import { type ActivityQuery, activityResponseSchema } from '../../../../shared/api/activity.ts';
import { fetchJson } from '../../../lib/http.ts';
import { activityKeys } from './activity-keys.ts';

/** GET /api/activity?limit=N — the caller's own audit events, newest first. */
export function getActivity(query: ActivityQuery) {
  return fetchJson(`/api/activity?limit=${query.limit}`, activityResponseSchema);
}

export const activityQueryOptions = (query: ActivityQuery) =>
  queryOptions({ queryKey: activityKeys.list(query), queryFn: () => getActivity(query) });

export function useActivity(query: ActivityQuery) {
  return useQuery(activityQueryOptions(query));
}
