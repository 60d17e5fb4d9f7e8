/**
 * An uploaded file read whole, as the upload's dry run: its sheets, or why it cannot be kept.
 *
 * The workbook or CSV reader reads every sheet (refusing hostile workbooks and lines past the
 * limit as it goes); then a file without sheets, or whose every sheet is empty, is refused; then
 * the limits on columns and cells (`sheet-limits.ts`); then whether any mapping could import it.
 * This runs in the parse worker (`../parse-worker.ts`), so none of it holds up the server.
 *
 * Throws `FileReadError`; the message names the sheet, row or line.
 *
 * Example: `await readUpload(bytes, 'csv', 'results.csv')` gives one grid named "results".
 */
import { isBlankCell, type SheetGrid } from '../../../../shared/intake/sheet-grid.ts';
import { FileReadError } from './file-read-error.ts';
import { readCsv } from './read-csv.ts';
import { readWorkbook } from './read-workbook.ts';
import { checkImportable, checkSheetLimits } from './sheet-limits.ts';

export type UploadFormat = 'xlsx' | 'csv';

export async function readUpload(
  bytes: Uint8Array,
  format: UploadFormat,
  fileName: string,
): Promise<SheetGrid[]> {
  const csvName = fileName.replace(/\.[^.]+$/, '').trim() || 'Sheet1';
  const sheets = format === 'xlsx' ? await readWorkbook(bytes) : readCsv(bytes, csvName);
  if (sheets.length === 0) throw new FileReadError('no-sheets', 'The workbook has no sheets.');
  const blank = sheets.filter((sheet) => sheet.rows.every((row) => row.every((cell) => isBlankCell(cell))));
  if (blank.length === sheets.length) {
    const names = sheets.map((sheet) => `"${sheet.name}"`).join(', ');
    const what = sheets.length === 1 ? `The sheet ${names} is empty` : `Every sheet (${names}) is empty`;
    throw new FileReadError(
      'empty-sheet',
      `${what}: there is no data to map. Check that you chose the right file.`,
    );
  }
  checkSheetLimits(sheets);
  checkImportable(sheets);
  return sheets;
}
