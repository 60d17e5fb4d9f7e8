/**
 * The one error type of the file readers: why an uploaded file could not be turned into cells.
 *
 * Each code is a case the analyst can act on, and the message says how (save as .xlsx, remove
 * the password, upload the file again). Callers branch on `code`; the message is for people.
 * 'macro-content', 'xml-declaration' and 'external-reference' are hostile workbooks
 * (`hostile-parts.ts`); 'too-large-to-read' and 'nothing-to-import' come from the upload's dry
 * run (`sheet-limits.ts`, `read-upload.ts`).
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
  | 'malformed-csv'
  | 'macro-content'
  | 'xml-declaration'
  | 'external-reference'
  | 'too-large-to-read'
  | 'nothing-to-import'
  | 'no-sheets'
  | 'empty-sheet';

export class FileReadError extends Error {
  readonly code: FileReadErrorCode;

  constructor(code: FileReadErrorCode, message: string) {
    super(message);
    this.name = 'FileReadError';
    this.code = code;
  }
}
