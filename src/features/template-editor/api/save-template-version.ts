import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  type SaveTemplateVersionRequest,
  saveTemplateVersionResponseSchema,
} from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** POST /api/admin/templates/:id/versions — refused (422, problems located) when the draft does not check. */
export function saveTemplateVersion(templateId: number, request: SaveTemplateVersionRequest) {
  return fetchJson(`/api/admin/templates/${templateId}/versions`, saveTemplateVersionResponseSchema, {
    method: 'POST',
    json: request,
  });
}

export function useSaveTemplateVersion(templateId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (request: SaveTemplateVersionRequest) => saveTemplateVersion(templateId, request),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: templateKeys.editor(templateId) }),
  });
}
