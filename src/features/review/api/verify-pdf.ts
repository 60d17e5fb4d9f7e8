import { useMutation } from '@tanstack/react-query';
import {
  type PdfVerification,
  pdfVerificationSchema,
  VERIFY_UPLOAD_FIELD,
} from '../../../../shared/api/review.ts';
import { fetchJson } from '../../../lib/http.ts';

/** POST /api/verify: the file goes as multipart with the CSRF header; the answer is checked with the shared schema. */
export function verifyPdf(file: File): Promise<PdfVerification> {
  const body = new FormData();
  body.append(VERIFY_UPLOAD_FIELD, file, file.name);
  return fetchJson('/api/verify', pdfVerificationSchema, { method: 'POST', body });
}

/** A check is a one-off question with no cache to invalidate, so it is a mutation. */
export function useVerifyPdf() {
  return useMutation({ mutationFn: verifyPdf });
}
