import { keepPreviousData, queryOptions, skipToken, useQuery } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { type TemplateSourceInput, templatePreviewResponseSchema } from '../../../../shared/api/templates.ts';
import { fetchJson } from '../../../lib/http.ts';
import { templateKeys } from './template-keys.ts';

/** How long typing must pause before the server renders the preview again. */
export const PREVIEW_DEBOUNCE_MS = 400;

/** POST /api/admin/templates/preview — the draft filled in with a sample analysis, or its problems. */
export function previewTemplate(
  source: TemplateSourceInput,
  sampleRunId: number | null,
  signal?: AbortSignal,
) {
  return fetchJson('/api/admin/templates/preview', templatePreviewResponseSchema, {
    method: 'POST',
    json: { source, sampleRunId },
    ...(signal ? { signal } : {}),
  });
}

/** Nothing is rendered until the editor holds a draft (`source` null). */
export const templatePreviewQueryOptions = (source: TemplateSourceInput | null, sampleRunId: number | null) =>
  queryOptions({
    queryKey: templateKeys.preview(source, sampleRunId),
    queryFn: source === null ? skipToken : ({ signal }) => previewTemplate(source, sampleRunId, signal),
    staleTime: Number.POSITIVE_INFINITY,
    gcTime: 60_000,
    retry: false,
    placeholderData: keepPreviousData,
  });

/** The value, once it has stopped changing for `delayMs`. */
export function useDebounced<T>(value: T, delayMs: number): T {
  const [settled, setSettled] = useState(value);
  useEffect(() => {
    const timer = window.setTimeout(() => setSettled(value), delayMs);
    return () => window.clearTimeout(timer);
  }, [value, delayMs]);
  return settled;
}

/**
 * The preview of the draft, re-rendered ~400 ms after the last keystroke (a request for an older
 * draft is cancelled). `waiting` is true while the shown preview is not yet of the current draft.
 */
export function useTemplatePreview(source: TemplateSourceInput | null, sampleRunId: number | null) {
  const settled = useDebounced(source, PREVIEW_DEBOUNCE_MS);
  const preview = useQuery(templatePreviewQueryOptions(settled, sampleRunId));
  return { preview, waiting: settled !== source || preview.isFetching || preview.isPlaceholderData };
}
