import { useMutation } from '@tanstack/react-query';
import { z } from 'zod';
import {
  type ImportRequest,
  importResponseSchema,
  intakeProblemSchema,
} from '../../../../shared/api/uploads.ts';
import { csrfToken } from '../../../lib/http.ts';

/** An import the server refused: its message and, for a 422, every problem with its cell. */
export class ImportRefused extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly problems: z.infer<typeof intakeProblemSchema>[],
  ) {
    super(message);
  }
}

const refusalSchema = z.object({
  error: z.object({ message: z.string(), details: z.unknown().optional() }),
});

/** POST /api/uploads/:id/import — stores the dataset, or refuses with all problems. */
export async function importUpload(uploadId: string, request: ImportRequest) {
  const response = await fetch(`/api/uploads/${encodeURIComponent(uploadId)}/import`, {
    method: 'POST',
    headers: { accept: 'application/json', 'content-type': 'application/json', 'x-csrf-token': csrfToken() },
    credentials: 'same-origin',
    body: JSON.stringify(request),
  });
  if (!response.ok) {
    const body = refusalSchema.safeParse(await response.json().catch(() => null));
    const message = body.success ? body.data.error.message : `The server answered ${response.status}.`;
    const details = body.success ? body.data.error.details : undefined;
    const problems = z.array(intakeProblemSchema).safeParse(details);
    const fieldIssues = z.array(z.object({ field: z.string(), message: z.string() })).safeParse(details);
    const listed = problems.success
      ? problems.data
      : fieldIssues.success
        ? fieldIssues.data.map((issue) => ({
            where: issue.field,
            message: issue.message,
            text: `${issue.field}: ${issue.message}`,
          }))
        : [];
    throw new ImportRefused(response.status, message, listed);
  }
  return importResponseSchema.parse(await response.json());
}

export function useImportUpload(uploadId: string) {
  return useMutation({ mutationFn: (request: ImportRequest) => importUpload(uploadId, request) });
}
