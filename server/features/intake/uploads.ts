/**
 * Uploaded files: decide the format from the content, prove the file readable before keeping it,
 * store the original byte for byte with its SHA-256, and preview its sheets for the mapping step.
 *
 * Format: a ZIP container (`PK\x03\x04`) or an OLE compound file (`D0 CF 11 E0`, an old .xls or a
 * password-protected workbook) goes to the workbook reader, which tells those cases apart; so
 * does any file named .xlsx/.xls whatever its content, so a mislabelled file gets the workbook
 * reader's message. Other content that reads as text is a CSV; anything else (control bytes in
 * the first kilobytes) is refused. The file is then read whole, once, in a parse worker
 * (`parse-pool.ts`, `readers/read-upload.ts`): a hostile workbook (macros, DTD or entity
 * declarations, external references), a file past the reading limits, a file whose every sheet
 * is empty and one no mapping could import (a header only, a single point) are refused there.
 * Refusals are `HttpError(422)` with a message the analyst can act on, naming the part, sheet,
 * row or line; nothing is stored.
 *
 * The stored original and its audit event are written in one transaction.
 */
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { PREVIEW_ROW_COUNT, type PreviewCell, type SheetPreview } from '../../../shared/api/uploads.ts';
import { columnLetter } from '../../../shared/intake/cell-reference.ts';
import { cellText } from '../../../shared/intake/resolve-column.ts';
import {
  type GridCell,
  isBlankCell,
  isFormulaWithoutValue,
  type MergedRange,
  type SheetGrid,
} from '../../../shared/intake/sheet-grid.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import { uploads } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { AuditContext } from '../studies/index.ts';
import { checkFileInWorker, readSheetsInWorker } from './parse-pool.ts';

export type UploadFormat = 'xlsx' | 'csv';
export type Upload = typeof uploads.$inferSelect;

const ZIP_SIGNATURE = [0x50, 0x4b, 0x03, 0x04];
const OLE_SIGNATURE = [0xd0, 0xcf, 0x11, 0xe0];
/** How much of a file is inspected to decide whether it is text. */
const TEXT_SNIFF_BYTES = 8192;
/** Share of control bytes (other than tab, CR, LF, form feed) above which content is not text. */
const MAX_CONTROL_BYTE_SHARE = 0.01;

function startsWith(bytes: Uint8Array, signature: number[]): boolean {
  return signature.every((byte, index) => bytes[index] === byte);
}

function looksLikeText(bytes: Uint8Array): boolean {
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return true; // UTF-16LE byte-order mark
  const sample = bytes.subarray(0, TEXT_SNIFF_BYTES);
  let control = 0;
  for (const byte of sample) {
    if (byte === 0) return false;
    if (byte < 0x20 && byte !== 0x09 && byte !== 0x0a && byte !== 0x0d && byte !== 0x0c) control += 1;
  }
  return control <= sample.length * MAX_CONTROL_BYTE_SHARE;
}

/** 'xlsx' or 'csv' from the content (and a workbook file name); a 422 for anything else. */
export function detectFormat(bytes: Uint8Array, fileName = ''): UploadFormat {
  if (bytes.length === 0)
    throw new HttpError(422, 'The file is empty. Choose the workbook or CSV file again.');
  if (startsWith(bytes, ZIP_SIGNATURE) || startsWith(bytes, OLE_SIGNATURE)) return 'xlsx';
  if (/\.xls[xm]?$/i.test(fileName)) return 'xlsx';
  if (looksLikeText(bytes)) return 'csv';
  throw new HttpError(
    422,
    'The file is neither an Excel workbook (.xlsx) nor a CSV text file. Export the data as .xlsx or CSV and upload that.',
    { code: 'not-a-workbook' },
  );
}

/**
 * Sheets of recently read files, by format, name and SHA-256 of the content. One upload is read
 * for the preview, for the mapping's dry run and for the import (the check on upload keeps its
 * cells in the worker), and a 100,000-row workbook takes about 0.35 s to read and 20 MB to hold.
 * The cache only saves work: a miss (another instance, a restart) reads the file again, and
 * since the key is the content's hash a hit gives exactly what reading would. Grids handed out
 * are shared, and callers treat them as read-only (the intake never writes to a grid).
 */
const SHEET_CACHE_ENTRIES = 4;
const sheetCache = new Map<string, SheetGrid[]>();

function cacheKey(bytes: Uint8Array, format: UploadFormat, fileName: string, sha256?: string): string {
  return `${format}\u0000${fileName}\u0000${sha256 ?? sha256Hex(bytes)}`;
}

/**
 * Drops an upload's sheets from the cache once it is imported: the grid of a large workbook is
 * tens of MB that the analysis that usually follows can use. Importing it again reads it again.
 */
export function forgetUploadSheets(upload: Pick<Upload, 'format' | 'fileName' | 'sha256' | 'content'>): void {
  sheetCache.delete(cacheKey(upload.content, upload.format as UploadFormat, upload.fileName, upload.sha256));
}

/** The sheets of a file, or a 422 naming why it cannot be read (empty sheets included). */
export async function readUploadedSheets(
  bytes: Uint8Array,
  format: UploadFormat,
  fileName: string,
  sha256?: string,
) {
  const key = cacheKey(bytes, format, fileName, sha256);
  const cached = sheetCache.get(key);
  if (cached) {
    sheetCache.delete(key);
    sheetCache.set(key, cached);
    return cached;
  }
  const sheets = await readSheetsInWorker(bytes, format, fileName);
  sheetCache.set(key, sheets);
  while (sheetCache.size > SHEET_CACHE_ENTRIES) sheetCache.delete(sheetCache.keys().next().value as string);
  return sheets;
}

export function sha256Hex(bytes: Uint8Array | string): string {
  return createHash('sha256').update(bytes).digest('hex');
}

export interface ReceivedFile {
  fileName: string;
  mediaType: string;
  bytes: Buffer;
  /** SHA-256 of `bytes` (hex) when the receiver already computed it while the file arrived. */
  sha256?: string;
}

/** Checks the file is readable, then stores it unchanged with its hash and an audit event. */
export async function storeUpload(
  db: Database,
  actor: SessionUser,
  studyId: number,
  file: ReceivedFile,
  context: AuditContext,
): Promise<Pick<Upload, 'id' | 'sha256' | 'format' | 'sizeBytes'>> {
  const format = detectFormat(file.bytes, file.fileName);
  const sha256 = file.sha256 ?? sha256Hex(file.bytes);
  // The dry run reads the whole file in a worker; its cells stay there (the preview reads again).
  await checkFileInWorker(file.bytes, format, file.fileName);
  return db.transaction(async (tx) => {
    const [upload] = await tx
      .insert(uploads)
      .values({
        organisationId: actor.organisationId,
        studyId,
        fileName: file.fileName,
        mediaType: file.mediaType || 'application/octet-stream',
        format,
        sizeBytes: file.bytes.length,
        sha256,
        content: file.bytes,
        uploadedBy: actor.id,
      })
      .returning({
        id: uploads.id,
        sha256: uploads.sha256,
        format: uploads.format,
        sizeBytes: uploads.sizeBytes,
      });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'upload.stored',
      recordType: 'upload',
      recordId: upload!.id,
      before: null,
      after: { studyId, fileName: file.fileName, format, sizeBytes: file.bytes.length, sha256 },
      context,
    });
    return upload!;
  });
}

/** The upload (content included), or a 404 when it is not in this organisation. */
export async function findUpload(db: Executor, organisationId: number, uploadId: number): Promise<Upload> {
  const [upload] = await db
    .select()
    .from(uploads)
    .where(and(eq(uploads.id, uploadId), eq(uploads.organisationId, organisationId)));
  if (!upload) throw new HttpError(404, `There is no upload ${uploadId} in your organisation.`);
  return upload;
}

export function sheetsOfUpload(upload: Upload) {
  return readUploadedSheets(upload.content, upload.format as UploadFormat, upload.fileName, upload.sha256);
}

function previewCell(cell: GridCell | undefined): PreviewCell {
  if (isFormulaWithoutValue(cell))
    return { text: `=${cell.formulaWithoutValue}`, kind: 'formula-without-value' };
  if (isBlankCell(cell)) return { text: '', kind: 'empty' };
  if (cell instanceof Date) return { text: cellText(cell), kind: 'date' };
  if (typeof cell === 'number') return { text: String(cell), kind: 'number' };
  if (typeof cell === 'boolean') return { text: cellText(cell), kind: 'boolean' };
  return { text: String(cell), kind: 'text' };
}

function rangeText(range: MergedRange): string {
  return `${columnLetter(range.left)}${range.top + 1}:${columnLetter(range.right)}${range.bottom + 1}`;
}

const isLabel = (cell: GridCell | undefined) =>
  typeof cell === 'string' && cell.trim() !== '' && !/^[+-]?\d+([.,]\d+)?$/.test(cell.trim());
const isMeasure = (cell: GridCell | undefined) =>
  typeof cell === 'number' ||
  cell instanceof Date ||
  (typeof cell === 'string' && /^[+-]?\d+([.,]\d+)?$/.test(cell.trim()));

/**
 * The 1-based row that looks like the header: the first of the first rows with two or more text
 * labels and no numbers, followed by a row with a number or date. 0 when no row fits.
 */
export function guessHeaderRow(sheet: SheetGrid): number {
  const limit = Math.min(sheet.rows.length - 1, PREVIEW_ROW_COUNT);
  for (let index = 0; index < limit; index += 1) {
    const row = sheet.rows[index] ?? [];
    const filled = row.filter((cell) => !isBlankCell(cell));
    if (filled.length >= 2 && filled.every(isLabel) && (sheet.rows[index + 1] ?? []).some(isMeasure))
      return index + 1;
  }
  return 0;
}

export function previewSheet(sheet: SheetGrid): SheetPreview {
  // A loop, not Math.max(...lengths): spreading 100,000 or more arguments overflows the stack.
  let columnCount = 0;
  for (const row of sheet.rows) if (row.length > columnCount) columnCount = row.length;
  const rows = sheet.rows
    .slice(0, PREVIEW_ROW_COUNT)
    .map((row) => Array.from({ length: columnCount }, (_, column) => previewCell(row[column])));
  return {
    name: sheet.name,
    rowCount: sheet.rows.length,
    columnCount,
    rows,
    merges: (sheet.merges ?? []).map(rangeText),
    headerGuess: guessHeaderRow(sheet),
  };
}
