/**
 * The one error type of the file readers: why an uploaded file could not be turned into cells.
 *
 * Each code is a case the analyst can act on, and the message says how (save as .xlsx, remove
 * the password, upload the file again). Callers branch on `code`; the message is for people.
 *
 * Example: `new FileReadError('password-protected', 'The workbook is protected by a password …')`.
 */
export type FileReadErrorCode =
  | 'empty-file'
  | 'not-a-workbook'
  | 'password-protected'
  | 'legacy-workbook'
  | 'damaged-workbook'
  | 'workbook-too-large'
  | 'malformed-csv';

export class FileReadError extends Error {
  readonly code: FileReadErrorCode;

  constructor(code: FileReadErrorCode, message: string) {
    super(message);
    this.name = 'FileReadError';
    this.code = code;
  }
}
