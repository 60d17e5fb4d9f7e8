import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import {
  type DecidePublicationRequest,
  decidePublicationResponseSchema,
  pendingPublicationsResponseSchema,
} from '../../../../shared/api/template-publication.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** GET /api/admin/templates/:id/publications — proposals waiting for a second admin. */
export function getPendingPublications(templateId: number) {
  return fetchJson(`/api/admin/templates/${templateId}/publications`, pendingPublicationsResponseSchema);
}

export const pendingPublicationsQueryOptions = (templateId: number) =>
  queryOptions({
    queryKey: templateKeys.publications(templateId),
    queryFn: () => getPendingPublications(templateId),
  });

export function usePendingPublications(templateId: number) {
  return useQuery(pendingPublicationsQueryOptions(templateId));
}

/** POST /api/admin/templates/:id/publications/:requestId/decision — approve or refuse. */
export function decidePublication(templateId: number, requestId: number, request: DecidePublicationRequest) {
  return fetchJson(
    `/api/admin/templates/${templateId}/publications/${requestId}/decision`,
    decidePublicationResponseSchema,
    { method: 'POST', json: request },
  );
}

export function useDecidePublication(templateId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ requestId, request }: { requestId: number; request: DecidePublicationRequest }) =>
      decidePublication(templateId, requestId, request),
    onSuccess: () =>
      Promise.all([
        queryClient.invalidateQueries({ queryKey: templateKeys.editor(templateId) }),
        queryClient.invalidateQueries({ queryKey: templateKeys.publications(templateId) }),
      ]),
  });
}
