import { useMutation } from '@tanstack/react-query';
import { z } from 'zod';
import {
  type ImportRequest,
  importResponseSchema,
  intakeProblemSchema,
} from '../../../../shared/api/uploads.ts';
import { type ApiError, fetchJson } from '../../../lib/http.ts';

type IntakeProblem = z.infer<typeof intakeProblemSchema>;

/** POST /api/uploads/:id/import — stores the dataset, or refuses (422) with every problem and its cell. */
export function importUpload(uploadId: string, request: ImportRequest) {
  return fetchJson(`/api/uploads/${encodeURIComponent(uploadId)}/import`, importResponseSchema, {
    method: 'POST',
    json: request,
  });
}

/** The problems of a refused import: the file's, each with its cell, or the request's fields. */
export function importProblems(refusal: ApiError): IntakeProblem[] {
  return (
    refusal.detailsAs(z.array(intakeProblemSchema)) ??
    refusal
      .fieldIssues()
      .map(({ field, message }) => ({ where: field, message, text: `${field}: ${message}` }))
  );
}

export function useImportUpload(uploadId: string) {
  return useMutation({ mutationFn: (request: ImportRequest) => importUpload(uploadId, request) });
}
