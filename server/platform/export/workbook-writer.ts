import { PassThrough, type Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import { columnHeading, type ExportCell, type ExportColumn, rowCells } from './export-columns.ts';
import { guardFormulaText } from './formula-guard.ts';

/**
 * The one workbook (.xlsx) writer: sheets described as column definitions and rows
 * (`export-columns.ts`), streamed out one after the other with exceljs's streaming writer, which
 * keeps memory flat for a 100 000-row dataset (the in-memory workbook needs several hundred bytes
 * per cell). The rows of a sheet are made, and turned into cells, only when that sheet is written.
 *
 * Cells: a number is a number cell (full double precision); null and undefined are empty cells;
 * text is a plain string cell, passed through `guardFormulaText` first so that it reads exactly
 * as it does in the CSV exports (OWASP "CSV Injection"). Only strings and numbers ever reach
 * exceljs here: exceljs makes a formula only from an object with a `formula` or `sharedFormula`
 * property, never from a string, so no text — whatever it begins with — becomes a formula.
 *
 * Every sheet has its header row in bold and frozen; a column is 14 characters wide unless its
 * definition says otherwise.
 */

/** Font and alignment for a whole row (a paragraph that wraps, a caution in italics). */
export interface RowStyle {
  font?: Partial<ExcelJS.Font>;
  alignment?: Partial<ExcelJS.Alignment>;
}

export interface SheetDefinition<Row> {
  name: string;
  columns: readonly ExportColumn<Row>[];
  /** Called when the sheet is written, so the rows may be a generator and are made only then. */
  rows: () => Iterable<Row>;
  rowStyle?: (row: Row) => RowStyle | undefined;
}

/** A sheet with its rows already bound to its columns, so sheets of different row types form one list. */
export interface PlannedSheet {
  name: string;
  columns: { heading: string; width: number }[];
  records(): Iterable<{ cells: ExportCell[]; style: RowStyle | undefined }>;
}

export interface WorkbookProperties {
  creator: string;
  created: Date;
  modified: Date;
}

const DEFAULT_COLUMN_WIDTH = 14;

export function planSheet<Row>(definition: SheetDefinition<Row>): PlannedSheet {
  const { name, columns, rows, rowStyle } = definition;
  return {
    name,
    columns: columns.map((column) => ({
      heading: columnHeading(column),
      width: column.width ?? DEFAULT_COLUMN_WIDTH,
    })),
    *records() {
      for (const row of rows()) yield { cells: rowCells(columns, row), style: rowStyle?.(row) };
    },
  };
}

/** The value exceljs is given for one cell: null, a number, or guarded text. */
export function workbookCellValue(cell: ExportCell): ExcelJS.CellValue {
  if (cell === null || cell === undefined) return null;
  return typeof cell === 'number' ? cell : guardFormulaText(cell);
}

/** Writes the sheets, in order, as one workbook to `stream` (an HTTP response, or a buffer). */
export async function writeWorkbook(
  sheets: Iterable<PlannedSheet>,
  properties: WorkbookProperties,
  stream: Writable,
): Promise<void> {
  const workbook = new ExcelJS.stream.xlsx.WorkbookWriter({
    stream,
    useStyles: true,
    useSharedStrings: false,
  });
  workbook.creator = properties.creator;
  workbook.created = properties.created;
  workbook.modified = properties.modified;
  for (const plan of sheets) {
    const sheet = workbook.addWorksheet(plan.name, { views: [{ state: 'frozen', ySplit: 1 }] });
    sheet.columns = plan.columns.map(({ heading, width }) => ({ header: heading, width }));
    const header = sheet.getRow(1);
    header.font = { bold: true };
    header.commit();
    for (const { cells, style } of plan.records()) {
      const row = sheet.addRow(cells.map(workbookCellValue));
      if (style?.font) row.font = style.font;
      if (style?.alignment) row.alignment = style.alignment;
      row.commit();
    }
    sheet.commit();
  }
  await workbook.commit();
}

/** What a writer put into a stream, as one buffer (for tests and callers that need the bytes). */
export async function collectStream(write: (stream: Writable) => Promise<void>): Promise<Buffer> {
  const chunks: Buffer[] = [];
  const sink = new PassThrough();
  sink.on('data', (chunk: Buffer) => chunks.push(chunk));
  const finished = new Promise<void>((resolve, reject) => {
    sink.on('end', resolve);
    sink.on('error', reject);
  });
  await write(sink);
  await finished;
  return Buffer.concat(chunks);
}
