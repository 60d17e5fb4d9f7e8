/**
 * Reads a CSV (or semicolon- or tab-separated) file into a cell grid for the intake.
 *
 * Lab exports vary: spreadsheet programs in countries that write decimal commas separate fields
 * with semicolons; some add a byte-order mark; older ones write Windows-1252 rather than UTF-8.
 * So the reader removes a BOM (UTF-8 or UTF-16LE), decodes UTF-8 and falls back to Windows-1252
 * (read as Latin-1) when the bytes are not valid UTF-8, and picks the delimiter that occurs most
 * often, outside quotes, in the first non-blank line (comma on a tie). Cells stay text — numbers,
 * including "98,7", are read by the intake — and empty cells become null. Blank lines are kept
 * as empty rows so row numbers in messages match the file.
 *
 * Throws `FileReadError('empty-file')` for a file with no content,
 * `FileReadError('malformed-csv')` (with the line) when quoting is broken, and
 * `FileReadError('too-large-to-read')` for a line, a row or a file past the limits of
 * `sheet-limits.ts` (the line length before parsing; columns and cells before the cells are
 * made. csv-parse's per-record callback would check them sooner but triples its time, measured).
 *
 * Example: `readCsv('Time;Assay\n0;100,2\n', 'product-a')` gives
 * `[{ name: 'product-a', rows: [['Time', 'Assay'], ['0', '100,2']] }]`.
 */
import { parse } from 'csv-parse/sync';
import type { GridCell, SheetGrid } from '../../../../shared/intake/sheet-grid.ts';
import { FileReadError } from './file-read-error.ts';
import { checkRecordLimits, firstLongLine, longLineError } from './sheet-limits.ts';

const CANDIDATE_DELIMITERS = [',', ';', '\t'] as const;

function decode(content: string | Uint8Array): string {
  if (typeof content === 'string') return content.replace(/^\uFEFF/, '');
  if (content[0] === 0xff && content[1] === 0xfe)
    return new TextDecoder('utf-16le').decode(content.subarray(2));
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(content).replace(/^\uFEFF/, '');
  } catch {
    return new TextDecoder('latin1').decode(content);
  }
}

/** The delimiter that appears most often outside quotes in the first non-blank line. */
export function detectDelimiter(text: string): string {
  const firstLine = text.split(/\r?\n/).find((line) => line.trim() !== '') ?? '';
  const counts = new Map<string, number>(CANDIDATE_DELIMITERS.map((delimiter) => [delimiter, 0]));
  let quoted = false;
  for (const character of firstLine) {
    if (character === '"') quoted = !quoted;
    else if (!quoted && counts.has(character)) counts.set(character, (counts.get(character) ?? 0) + 1);
  }
  let best: string = ',';
  for (const [delimiter, count] of counts) if (count > (counts.get(best) ?? 0)) best = delimiter;
  return best;
}

export function readCsv(content: string | Uint8Array, sheetName = 'Sheet1'): SheetGrid[] {
  const text = decode(content);
  if (text.trim() === '') throw new FileReadError('empty-file', 'The file is empty.');
  const longLine = firstLongLine(text);
  if (longLine) throw longLineError(longLine);
  let records: string[][];
  try {
    records = parse(text, {
      delimiter: detectDelimiter(text),
      relax_column_count: true,
      skip_empty_lines: false,
      trim: false,
    }) as string[][];
  } catch (error) {
    const line = (error as { lines?: number }).lines;
    const where = line === undefined ? '' : ` near line ${line}`;
    throw new FileReadError(
      'malformed-csv',
      `The CSV file could not be read${where}: ${(error as Error).message}. Check for a quote that is not closed.`,
    );
  }
  checkRecordLimits(records, sheetName);
  const rows: GridCell[][] = records.map((record) =>
    record.map((cell) => (cell.trim() === '' ? null : cell)),
  );
  return [{ name: sheetName, rows }];
}
