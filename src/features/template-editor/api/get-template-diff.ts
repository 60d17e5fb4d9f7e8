import { queryOptions, useQuery } from '@tanstack/react-query';
import { templateDiffResponseSchema } from '../../../../shared/api/templates.ts';
import { templateRequest } from './request.ts';
import { templateKeys } from './template-keys.ts';

/** GET /api/admin/templates/:id/diff?from=&to= — part-by-part difference of two versions. */
export function getTemplateDiff(templateId: number, from: number, to: number) {
  return templateRequest(
    `/api/admin/templates/${templateId}/diff?from=${from}&to=${to}`,
    templateDiffResponseSchema,
  );
}

export const templateDiffQueryOptions = (templateId: number, from: number, to: number) =>
  queryOptions({
    queryKey: templateKeys.diff(templateId, from, to),
    queryFn: () => getTemplateDiff(templateId, from, to),
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useTemplateDiff(templateId: number, pair: { from: number; to: number } | null) {
  return useQuery({
    ...templateDiffQueryOptions(templateId, pair?.from ?? 0, pair?.to ?? 0),
    enabled: pair !== null,
  });
}
