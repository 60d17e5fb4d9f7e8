import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  type CreateReportVersionRequest,
  createReportResponseSchema,
  createReportVersionRequestSchema,
} from '../../../../shared/api/reports.ts';
import { fetchJson } from '../../../lib/http.ts';
import { reportKeys } from './report-keys.ts';

/** POST /api/reports/:id/versions: render the report again as a new version. */
export function createReportVersion(reportId: number, request: CreateReportVersionRequest) {
  const body = createReportVersionRequestSchema.parse(request);
  return fetchJson(`/api/reports/${reportId}/versions`, createReportResponseSchema, {
    method: 'POST',
    json: body,
  });
}

export function useCreateReportVersion(reportId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (request: CreateReportVersionRequest) => createReportVersion(reportId, request),
    onSuccess: async () => {
      await queryClient.invalidateQueries({ queryKey: reportKeys.detail(reportId) });
      await queryClient.invalidateQueries({ queryKey: reportKeys.lists() });
    },
  });
}
