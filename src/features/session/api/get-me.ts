import { queryOptions, useQuery } from '@tanstack/react-query';
import { meResponseSchema } from '../../../../shared/api/session.ts';
import { fetchJson } from '../../../lib/http.ts';
import { sessionKeys } from './session-keys.ts';

/** GET /api/me */
export function getMe() {
  return fetchJson('/api/me', meResponseSchema);
}

/** The signed-in person and their roles; islands use it to offer only what the server allows. */
export const meQueryOptions = () =>
  queryOptions({ queryKey: sessionKeys.me(), queryFn: getMe, staleTime: 60_000 });

export function useMe() {
  return useQuery(meQueryOptions());
}
