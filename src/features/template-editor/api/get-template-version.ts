import { queryOptions, useQuery } from '@tanstack/react-query';
import { templateVersionResponseSchema } from '../../../../shared/api/templates.ts';
import { templateRequest } from './request.ts';
import { templateKeys } from './template-keys.ts';

/** GET /api/admin/templates/:id/versions/:versionId — one version's text (versions never change). */
export function getTemplateVersion(templateId: number, versionId: number) {
  return templateRequest(
    `/api/admin/templates/${templateId}/versions/${versionId}`,
    templateVersionResponseSchema,
  );
}

export const templateVersionQueryOptions = (templateId: number, versionId: number) =>
  queryOptions({
    queryKey: templateKeys.version(templateId, versionId),
    queryFn: () => getTemplateVersion(templateId, versionId),
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useTemplateVersion(templateId: number, versionId: number | null) {
  return useQuery({
    ...templateVersionQueryOptions(templateId, versionId ?? 0),
    enabled: versionId !== null,
  });
}
