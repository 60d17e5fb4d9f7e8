import { queryOptions, skipToken, useQuery } from '@tanstack/react-query';
import { templateDiffResponseSchema } from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys, type VersionPair } from './template-keys.ts';

/** GET /api/admin/templates/:id/diff?from=&to= — part-by-part difference of two versions. */
export function getTemplateDiff(templateId: number, { from, to }: VersionPair) {
  return fetchJson(
    `/api/admin/templates/${templateId}/diff?from=${from}&to=${to}`,
    templateDiffResponseSchema,
  );
}

/** Nothing is fetched until two versions are chosen (`pair` null). */
export const templateDiffQueryOptions = (templateId: number, pair: VersionPair | null) =>
  queryOptions({
    queryKey: templateKeys.diff(templateId, pair),
    queryFn: pair ? () => getTemplateDiff(templateId, pair) : skipToken,
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useTemplateDiff(templateId: number, pair: VersionPair | null) {
  return useQuery(templateDiffQueryOptions(templateId, pair));
}
