import { useMutation } from '@tanstack/react-query';
import { runAnalysisResponseSchema } from '../../../../shared/api/uploads.ts';
import { ApiError, fetchJson } from '../../../lib/http.ts';

/**
 * POST /api/datasets/:datasetId/analyses with the default options; answers `{ runId }`.
 * A missing endpoint (404) is explained rather than shown as a bare status.
 */
export async function runAnalysis(datasetId: number | string) {
  try {
    return await fetchJson(
      `/api/datasets/${encodeURIComponent(String(datasetId))}/analyses`,
      runAnalysisResponseSchema,
      { method: 'POST', json: {} },
    );
  } catch (error) {
    if (error instanceof ApiError && error.status === 404 && /nothing at/i.test(error.message)) {
      throw new ApiError(
        404,
        'Analyses cannot be run from here yet: this server has no analysis service. The dataset is stored.',
      );
    }
    if (!(error instanceof ApiError)) {
      throw new ApiError(
        0,
        'The analysis could not be started: the server gave no usable answer. The dataset is stored; try again.',
      );
    }
    throw error;
  }
}

export function useRunAnalysis() {
  return useMutation({
    mutationFn: runAnalysis,
    onSuccess: ({ runId }) => {
      window.location.assign(`/analyses/${runId}`);
    },
  });
}
