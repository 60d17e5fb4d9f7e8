import { queryOptions, useQuery } from '@tanstack/react-query';
import { analysisFiguresResponseSchema } from '../../../../shared/api/analyses.ts';
import { fetchJson } from '../../../lib/http.ts';

/** GET /api/analyses/:id/figures — every figure of a run, built on the server from the stored result. */
export function getAnalysisFigures(url: string) {
  return fetchJson(url, analysisFiguresResponseSchema);
}

/** One key per run: all figure islands of a page share one request (a stored run never changes). */
export const analysisFiguresQueryOptions = (url: string) =>
  queryOptions({
    queryKey: ['analysis-figures', url],
    queryFn: () => getAnalysisFigures(url),
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useAnalysisFigures(url: string | undefined) {
  return useQuery({ ...analysisFiguresQueryOptions(url ?? ''), enabled: Boolean(url) });
}
