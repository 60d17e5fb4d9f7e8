import { useMutation } from '@tanstack/react-query';
import { UPLOAD_FIELD, uploadResponseSchema } from '../../../../shared/api/uploads.ts';
import { ApiError, csrfToken } from '../../../lib/http.ts';

/** POST /api/studies/:studyId/uploads (multipart): stores the original, answers its mapping page. */
export async function uploadFile(studyId: string, file: File) {
  const form = new FormData();
  form.append(UPLOAD_FIELD, file, file.name);
  const response = await fetch(`/api/studies/${encodeURIComponent(studyId)}/uploads`, {
    method: 'POST',
    body: form,
    headers: { accept: 'application/json', 'x-csrf-token': csrfToken() },
    credentials: 'same-origin',
  });
  if (!response.ok) {
    const body = (await response.json().catch(() => null)) as { error?: { message?: string } } | null;
    throw new ApiError(response.status, body?.error?.message ?? `The server answered ${response.status}.`);
  }
  return uploadResponseSchema.parse(await response.json());
}

export function useUploadFile(studyId: string) {
  return useMutation({ mutationFn: (file: File) => uploadFile(studyId, file) });
}
