import { queryOptions, useQuery } from '@tanstack/react-query';
import { templateEditorResponseSchema } from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** GET /api/admin/templates/:id — the template, its versions, sample analyses, variables, helpers. */
export function getTemplateEditor(templateId: number) {
  return fetchJson(`/api/admin/templates/${templateId}`, templateEditorResponseSchema);
}

export const templateEditorQueryOptions = (templateId: number) =>
  queryOptions({ queryKey: templateKeys.editor(templateId), queryFn: () => getTemplateEditor(templateId) });

export function useTemplateEditor(templateId: number) {
  return useQuery(templateEditorQueryOptions(templateId));
}
