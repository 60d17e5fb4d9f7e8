import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  type PublishTemplateVersionRequest,
  publishTemplateVersionResponseSchema,
} from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** POST /api/admin/templates/:id/publish — an earlier version than the published one is a rollback. */
export function publishTemplateVersion(templateId: number, request: PublishTemplateVersionRequest) {
  return fetchJson(`/api/admin/templates/${templateId}/publish`, publishTemplateVersionResponseSchema, {
    method: 'POST',
    json: request,
  });
}

export function usePublishTemplateVersion(templateId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (request: PublishTemplateVersionRequest) => publishTemplateVersion(templateId, request),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: templateKeys.editor(templateId) }),
  });
}
