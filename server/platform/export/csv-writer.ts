import { stringify } from 'csv-stringify/sync';
import { columnHeading, type ExportCell, type ExportColumn, rowCells } from './export-columns.ts';
import { guardFormulaText } from './formula-guard.ts';

/**
 * The one CSV writer of the product: every CSV export (analysis results, audit trail) is written
 * here, so quoting, line ends and the formula guard cannot drift apart between them.
 *
 * Format (RFC 4180, https://www.rfc-editor.org/rfc/rfc4180): comma-separated; every record ends
 * with CRLF, the last one included; a field holding a comma, a double quote, CR or LF is wrapped
 * in double quotes with inner quotes doubled; no other field is quoted. Text is UTF-8; with
 * `byteOrderMark` the text starts with U+FEFF, which spreadsheet programs need to read "°" and
 * "µ" as UTF-8 rather than as the local code page.
 *
 * Cells: a string is text and passes through `guardFormulaText` (OWASP "CSV Injection"); a number
 * is written as JavaScript prints it (`-0.0123`, `6.213e-4`) and never guarded; null and
 * undefined are empty fields. The quoting and the record layout are csv-stringify's; this module
 * only fixes its options, two of them on purpose: with a CRLF record delimiter csv-stringify
 * quotes a field only when it holds the whole CRLF unless `quote_record_delimiter` is set (a lone
 * LF or CR would then split the record for a reader), and its own `escape_formulas` stays off
 * because it guards a wider set (the full-width ＝ ＋ － ＠ too) that the workbook writer would not
 * match, so the same text would read differently in the CSV and in the workbook.
 *
 * Throws nothing for the cell types it accepts.
 *
 * Example: `csvRecords([['name', 'k'], ['=HYPERLINK("x")', -0.0123]])` is
 * `name,k\r\n"'=HYPERLINK(""x"")",-0.0123\r\n`.
 */

export interface CsvOptions {
  /** Start the text with the UTF-8 byte-order mark (U+FEFF). Default false. */
  byteOrderMark?: boolean;
}

/** The records as CSV text, each ending with CRLF. */
export function csvRecords(records: Iterable<readonly ExportCell[]>, options: CsvOptions = {}): string {
  return stringify([...records] as ExportCell[][], {
    bom: options.byteOrderMark === true,
    delimiter: ',',
    quote: '"',
    escape: '"',
    record_delimiter: '\r\n',
    quote_record_delimiter: true,
    eof: true,
    escape_formulas: false,
    cast: {
      string: guardFormulaText,
      number: (value) => String(value),
    },
  });
}

/**
 * A table as CSV: a header row naming each column by its `key` (its heading when it has none),
 * then one record per row.
 */
export function csvTable<Row>(
  columns: readonly ExportColumn<Row>[],
  rows: Iterable<Row>,
  options: CsvOptions = {},
): string {
  const header = columns.map((column) => column.key ?? columnHeading(column));
  const records = (function* () {
    yield header;
    for (const row of rows) yield rowCells(columns, row);
  })();
  return csvRecords(records, options);
}
