/** The messages between the server and its parse workers (`parse-pool.ts`, `parse-worker.ts`). */
import type { SheetGrid } from '../../../shared/intake/sheet-grid.ts';
import type { FileReadErrorCode } from './readers/file-read-error.ts';
import type { UploadFormat } from './readers/read-upload.ts';

export interface ParseTask {
  bytes: Uint8Array;
  format: UploadFormat;
  fileName: string;
  /** 'verdict': only whether the file can be kept (the upload's dry run sends no cells back). */
  answer: 'sheets' | 'verdict';
}

export type ParseOutcome =
  | { ok: true; sheets: SheetGrid[] | null }
  | { ok: false; code: FileReadErrorCode | 'internal'; message: string };
