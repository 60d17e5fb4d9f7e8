import { queryOptions, skipToken, useQuery } from '@tanstack/react-query';
import { analysisFiguresResponseSchema } from '../../../../shared/api/analyses.ts';
import { fetchJson } from '../../../lib/http.ts';
import { analysisKeys } from './analysis-keys.ts';

/** GET /api/analyses/:id/figures — every figure of a run, built on the server from the stored result. */
export function getAnalysisFigures(url: string) {
  return fetchJson(url, analysisFiguresResponseSchema);
}

/** A stored run never changes; nothing is fetched until the island has read its URL. */
export const analysisFiguresQueryOptions = (url: string | undefined) =>
  queryOptions({
    queryKey: analysisKeys.figures(url),
    queryFn: url ? () => getAnalysisFigures(url) : skipToken,
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useAnalysisFigures(url: string | undefined) {
  return useQuery(analysisFiguresQueryOptions(url));
}
