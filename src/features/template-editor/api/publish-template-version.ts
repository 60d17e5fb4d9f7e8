import { useMutation, useQueryClient } from '@tanstack/react-query';
import { publishOutcomeSchema } from '../../../../shared/api/template-publication.ts';
import type { PublishTemplateVersionRequest } from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/**
 * POST /api/admin/templates/:id/publish — an earlier version than the published one is a rollback;
 * when the organisation requires a second admin, the answer is a pending publication instead.
 */
export function publishTemplateVersion(templateId: number, request: PublishTemplateVersionRequest) {
  return fetchJson(`/api/admin/templates/${templateId}/publish`, publishOutcomeSchema, {
    method: 'POST',
    json: request,
  });
}

export function usePublishTemplateVersion(templateId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (request: PublishTemplateVersionRequest) => publishTemplateVersion(templateId, request),
    onSuccess: () =>
      Promise.all([
        queryClient.invalidateQueries({ queryKey: templateKeys.editor(templateId) }),
        queryClient.invalidateQueries({ queryKey: templateKeys.publications(templateId) }),
      ]),
  });
}
