import { useMutation } from '@tanstack/react-query';
import { UPLOAD_FIELD, uploadResponseSchema } from '../../../../shared/api/uploads.ts';
import { fetchJson } from '../../../lib/http.ts';

/** POST /api/studies/:studyId/uploads (multipart): stores the original, answers its mapping page. */
export function uploadFile(studyId: string, file: File) {
  const form = new FormData();
  form.append(UPLOAD_FIELD, file, file.name);
  return fetchJson(`/api/studies/${encodeURIComponent(studyId)}/uploads`, uploadResponseSchema, {
    method: 'POST',
    body: form,
  });
}

export function useUploadFile(studyId: string) {
  return useMutation({ mutationFn: (file: File) => uploadFile(studyId, file) });
}
