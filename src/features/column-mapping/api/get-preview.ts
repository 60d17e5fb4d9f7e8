import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { previewResponseSchema } from '../../../../shared/api/uploads.ts';
import type { ColumnMapping } from '../../../../shared/intake/column-mapping.ts';
import { fetchJson } from '../../../lib/http.ts';
import { uploadKeys } from './upload-keys.ts';

/** GET /api/uploads/:id/preview — sheets, saved mappings that fit, and a dry run of `mapping`. */
export function getPreview(uploadId: string, mapping: ColumnMapping | null) {
  const query = mapping ? `?mapping=${encodeURIComponent(JSON.stringify(mapping))}` : '';
  return fetchJson(`/api/uploads/${encodeURIComponent(uploadId)}/preview${query}`, previewResponseSchema);
}

export const previewQueryOptions = (uploadId: string, mapping: ColumnMapping | null) =>
  queryOptions({
    queryKey: uploadKeys.preview(uploadId, mapping),
    queryFn: () => getPreview(uploadId, mapping),
    placeholderData: keepPreviousData,
    staleTime: Number.POSITIVE_INFINITY,
  });

export function usePreview(uploadId: string, mapping: ColumnMapping | null) {
  return useQuery(previewQueryOptions(uploadId, mapping));
}
