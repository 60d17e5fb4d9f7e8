import { queryOptions, skipToken, useQuery } from '@tanstack/react-query';
import { templateVersionResponseSchema } from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** GET /api/admin/templates/:id/versions/:versionId — one version's text (versions never change). */
export function getTemplateVersion(templateId: number, versionId: number) {
  return fetchJson(`/api/admin/templates/${templateId}/versions/${versionId}`, templateVersionResponseSchema);
}

/** Nothing is fetched while no version is chosen (`versionId` null). */
export const templateVersionQueryOptions = (templateId: number, versionId: number | null) =>
  queryOptions({
    queryKey: templateKeys.version(templateId, versionId),
    queryFn: versionId === null ? skipToken : () => getTemplateVersion(templateId, versionId),
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useTemplateVersion(templateId: number, versionId: number | null) {
  return useQuery(templateVersionQueryOptions(templateId, versionId));
}
