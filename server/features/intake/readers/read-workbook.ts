/**
 * Reads an Excel workbook (.xlsx) into one cell grid per worksheet, for the intake.
 *
 * Each cell becomes what a person sees in it: a formula becomes its stored result, or a
 * `FormulaWithoutValue` marker when the file stores none (written by a program that does not
 * compute); rich text becomes its plain text; a hyperlink its text; a date a `Date`; an error
 * value ("#N/A") its text, which the intake then reports as not a number. Merged blocks are
 * listed, and their content kept in the top-left cell only, as the file stores it.
 *
 * Two readers give the same grids. The fast one (`xlsx-sheet-grids.ts`) reads the workbook's XML
 * parts directly and handles the plain SpreadsheetML that spreadsheet programs write: a
 * 100,000-row sheet takes it about 0.35 s and 20 MB of cells, against about 2.3 s and 250 MB more
 * for a full workbook model. For anything outside that subset, or a damaged file, it steps aside
 * and the general reader (exceljs's full workbook model, loaded only then) reads the file or names
 * the problem, so damaged files get the same messages as before. The fast reader also reads two
 * things the general one misreads: ISO date cells (`t="d"`) and a 1904 date system written
 * `date1904="true"`.
 *
 * The file's first bytes tell the failure cases apart before exceljs sees them: a ZIP container
 * is an .xlsx; an OLE compound file holding an "EncryptedPackage" is a password-protected
 * workbook; another OLE compound file is the old binary .xls format.
 *
 * Before either reader sees a part, `assertNoHostileParts` refuses macros, DTD or entity
 * declarations and references outside the file (`hostile-parts.ts`).
 *
 * Archives that would unpack past `MAX_EXPANDED_BYTES` (a "ZIP bomb") or whose ZIP structure is
 * damaged are refused before any reader unpacks them whole: the general reader is only handed
 * archives whose every entry inflated within its declared size.
 *
 * Throws `FileReadError` with code 'empty-file', 'password-protected', 'legacy-workbook',
 * 'not-a-workbook', 'damaged-workbook' (truncated or corrupt ZIP/XML), 'workbook-too-large',
 * 'macro-content', 'xml-declaration' or 'external-reference'.
 *
 * Example: a workbook with sheet "Long term" holding A1 = "Month", B1 = "Assay", A2 = 0,
 * B2 = 100.2 gives `[{ name: 'Long term', rows: [['Month', 'Assay'], [0, 100.2]], merges: [] }]`.
 */
import type ExcelJS from 'exceljs';
import { columnIndex } from '../../../../shared/intake/cell-reference.ts';
import type { GridCell, MergedRange, SheetGrid } from '../../../../shared/intake/sheet-grid.ts';
import { FileReadError } from './file-read-error.ts';
import { assertNoHostileParts } from './hostile-parts.ts';
import { xlsxSheetGrids } from './xlsx-sheet-grids.ts';
import { assertBoundedExpansion, MAX_EXPANDED_BYTES, ZipDamaged, ZipTooLarge } from './xlsx-zip-entries.ts';

const ZIP_SIGNATURE = [0x50, 0x4b, 0x03, 0x04];
const OLE_SIGNATURE = [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1];
const ENCRYPTED_PACKAGE_UTF16 = Buffer.from('EncryptedPackage', 'utf16le');

function startsWith(bytes: Uint8Array, signature: number[]): boolean {
  return signature.every((byte, index) => bytes[index] === byte);
}

function checkContainer(bytes: Uint8Array): void {
  if (bytes.length === 0) throw new FileReadError('empty-file', 'The file is empty.');
  if (startsWith(bytes, OLE_SIGNATURE)) {
    if (Buffer.from(bytes).includes(ENCRYPTED_PACKAGE_UTF16)) {
      throw new FileReadError(
        'password-protected',
        'The workbook is protected by a password. Remove the password (save a copy without it) and upload again.',
      );
    }
    throw new FileReadError(
      'legacy-workbook',
      'This is an old-format Excel file (.xls). Open it in a spreadsheet program and save it as .xlsx.',
    );
  }
  if (!startsWith(bytes, ZIP_SIGNATURE)) {
    throw new FileReadError(
      'not-a-workbook',
      'The file is not an Excel workbook (.xlsx). Upload an .xlsx or a CSV file.',
    );
  }
}

/** Plain content of one exceljs cell value. */
function plainValue(value: ExcelJS.CellValue): GridCell {
  if (value === null || value === undefined) return null;
  if (typeof value === 'number' || typeof value === 'string' || typeof value === 'boolean') return value;
  if (value instanceof Date) return value;
  if ('richText' in value) return value.richText.map((run) => run.text).join('');
  if ('formula' in value || 'sharedFormula' in value) {
    const result = value.result;
    if (result === undefined || result === null) {
      const formula = 'sharedFormula' in value ? value.sharedFormula : value.formula;
      return { formulaWithoutValue: formula ?? '' };
    }
    return plainValue(result as ExcelJS.CellValue);
  }
  if ('error' in value) return value.error;
  if ('text' in value)
    return typeof value.text === 'string' ? value.text : plainValue(value.text as ExcelJS.CellValue);
  return null;
}

function parseRange(range: string): MergedRange | null {
  const match = /^\$?([A-Z]+)\$?(\d+):\$?([A-Z]+)\$?(\d+)$/.exec(range);
  if (!match) return null;
  const [, left, top, right, bottom] = match as unknown as [string, string, string, string, string];
  return {
    top: Number(top) - 1,
    left: columnIndex(left),
    bottom: Number(bottom) - 1,
    right: columnIndex(right),
  };
}

function readSheet(worksheet: ExcelJS.Worksheet): SheetGrid {
  const rows: GridCell[][] = [];
  const width = worksheet.columnCount;
  for (let rowNumber = 1; rowNumber <= worksheet.rowCount; rowNumber += 1) {
    const row = worksheet.getRow(rowNumber);
    const cells: GridCell[] = [];
    for (let columnNumber = 1; columnNumber <= width; columnNumber += 1) {
      const cell = row.getCell(columnNumber);
      const isMergedAway = cell.isMerged && cell.master.address !== cell.address;
      cells.push(isMergedAway ? null : plainValue(cell.value));
    }
    while (cells.length > 0 && cells[cells.length - 1] === null) cells.pop();
    rows.push(cells);
  }
  const merges = (worksheet.model.merges ?? []).flatMap((range) => {
    const parsed = parseRange(range);
    return parsed ? [parsed] : [];
  });
  return { name: worksheet.name, rows, merges };
}

const MIB = 1024 * 1024;

/** The analyst's message for an archive no reader should open; null for any other error. */
function finalArchiveError(error: unknown): FileReadError | null {
  if (error instanceof ZipTooLarge) {
    return new FileReadError(
      'workbook-too-large',
      `The workbook would unpack to ${Math.ceil(error.expandedBytes / MIB)} MB; Rateledger opens workbooks that unpack to at most ${MAX_EXPANDED_BYTES / MIB} MB. Delete sheets, images or columns the study does not need and save again, or upload the data as CSV.`,
    );
  }
  if (error instanceof ZipDamaged) {
    return new FileReadError(
      'damaged-workbook',
      `The workbook could not be opened; it may be incomplete or damaged (${error.message}). Upload it again, or open and save it in a spreadsheet program.`,
    );
  }
  return null;
}

export async function readWorkbook(content: Uint8Array): Promise<SheetGrid[]> {
  checkContainer(content);
  try {
    assertNoHostileParts(content);
    return xlsxSheetGrids(content);
  } catch (error) {
    if (error instanceof FileReadError) throw error;
    const final = finalArchiveError(error);
    if (final) throw final;
    // Outside the fast reader's plain subset: the general reader decides.
    return readWithObjectModel(content);
  }
}

/** The general reader: exceljs's full workbook model, slower and larger but complete. */
export async function readWithObjectModel(content: Uint8Array): Promise<SheetGrid[]> {
  // Loaded on first use: most uploads never need it, and it is a large module.
  try {
    assertBoundedExpansion(content);
  } catch (error) {
    throw finalArchiveError(error) ?? error;
  }
  const { default: ExcelJSModule } = await import('exceljs');
  const workbook = new ExcelJSModule.Workbook();
  try {
    await workbook.xlsx.load(Buffer.from(content) as unknown as ExcelJS.Buffer);
  } catch (error) {
    throw new FileReadError(
      'damaged-workbook',
      `The workbook could not be opened; it may be incomplete or damaged (${(error as Error).message}). Upload it again, or open and save it in a spreadsheet program.`,
    );
  }
  return workbook.worksheets.map(readSheet);
}
