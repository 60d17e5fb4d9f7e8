/**
 * Reads a data file from disk into cell grids, choosing the reader by the file's first bytes
 * (a ZIP or OLE container is a workbook; anything else is read as CSV), so a workbook saved with
 * the wrong extension still opens. A CSV's one sheet is named after the file (without extension),
 * as spreadsheet programs do when they open it.
 *
 * The workbook reader (and the ZIP, XML and zlib code under it) is loaded only when the file is a
 * workbook, so reading a CSV does not pay for it at start-up.
 *
 * Throws `FileReadError` (from the readers) or the file system's error (missing file).
 *
 * Example: `await loadSheets('tests/fixtures/veltrazine-stability.csv')` gives one grid named
 * 'veltrazine-stability'.
 */
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import type { SheetGrid } from '../../shared/intake/sheet-grid.ts';
import { FileReadError } from '../features/intake/readers/file-read-error.ts';
import { readCsv } from '../features/intake/readers/read-csv.ts';

const CONTAINER_SIGNATURES = [
  [0x50, 0x4b, 0x03, 0x04],
  [0xd0, 0xcf, 0x11, 0xe0],
];

export async function loadSheets(file: string): Promise<SheetGrid[]> {
  const bytes = new Uint8Array(await readFile(file));
  const extension = path.extname(file).toLowerCase();
  const isContainer = CONTAINER_SIGNATURES.some((signature) =>
    signature.every((byte, index) => bytes[index] === byte),
  );
  if (isContainer || extension === '.xlsx' || extension === '.xlsm' || extension === '.xls') {
    const { readWorkbook } = await import('../features/intake/readers/read-workbook.ts');
    return readWorkbook(bytes);
  }
  return readCsv(bytes, path.basename(file, path.extname(file)));
}

/**
 * The file's sheets for a command, or its `fail` called with the one line to print: the reader's
 * refusal or "no such file". Anything else is thrown on.
 */
export async function loadSheetsOrFail(
  file: string,
  fail: (messages: string[]) => never,
): Promise<SheetGrid[]> {
  try {
    return await loadSheets(file);
  } catch (error) {
    if (error instanceof FileReadError) fail([`${file}: ${error.message}`]);
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') fail([`${file}: no such file.`]);
    throw error;
  }
}
