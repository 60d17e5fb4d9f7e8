/** What other features and the app may use from the intake feature. */
export * from './datasets.ts';
export { readSheetsInWorker } from './parse-pool.ts';
export * from './readers/file-read-error.ts';
export * from './readers/read-csv.ts';
export * from './readers/read-workbook.ts';
export * from './upload-routes.ts';
export { detectFormat, type ReceivedFile, sha256Hex } from './uploads.ts';
