import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import type { ExportColumn } from './export-columns.ts';
import { collectStream, planSheet, workbookCellValue, writeWorkbook } from './workbook-writer.ts';

// Formula rules from OWASP, "CSV Injection" (https://owasp.org/www-community/attacks/CSV_Injection):
// the workbook guards text exactly as the CSV writer does, so both show the same text.

interface Row {
  label: string;
  estimate: number | null;
  mixed: string | number;
}

const COLUMNS: ExportColumn<Row>[] = [
  { header: 'Label', width: 30, type: 'text', value: (row) => row.label },
  { header: 'Estimate', unit: '1/month', type: 'number', value: (row) => row.estimate },
  { header: 'Value', type: 'text-or-number', value: (row) => row.mixed },
];

const DANGEROUS = [
  '=HYPERLINK("http://example.invalid","x")',
  '+1+1',
  '-2+3',
  '@SUM(A1)',
  '\t=1',
  '\r=1',
  '-5 %',
];

async function written(rows: Row[]): Promise<ExcelJS.Workbook> {
  const bytes = await collectStream((stream) =>
    writeWorkbook(
      [planSheet({ name: 'Sheet', columns: COLUMNS, rows: () => rows })],
      { creator: 'test', created: new Date(0), modified: new Date(0) },
      stream,
    ),
  );
  const book = new ExcelJS.Workbook();
  await book.xlsx.load(bytes as unknown as ExcelJS.Buffer);
  return book;
}

describe('workbookCellValue', () => {
  it('guards text, keeps numbers (negative ones too) and makes null/undefined empty', () => {
    expect(workbookCellValue('=1+1')).toBe("'=1+1");
    expect(workbookCellValue('-5 %')).toBe("'-5 %");
    expect(workbookCellValue('plain')).toBe('plain');
    expect(workbookCellValue(-0.0123)).toBe(-0.0123);
    expect(workbookCellValue(null)).toBeNull();
    expect(workbookCellValue(undefined)).toBeNull();
  });
});

describe('writeWorkbook', () => {
  it('writes headings with units in a bold frozen first row and the column widths', async () => {
    const sheet = (await written([])).getWorksheet('Sheet')!;
    expect((sheet.getRow(1).values as unknown[]).slice(1)).toEqual(['Label', 'Estimate (1/month)', 'Value']);
    expect(sheet.getRow(1).getCell(1).font?.bold).toBe(true);
    expect(sheet.views[0]).toMatchObject({ state: 'frozen', ySplit: 1 });
    expect(sheet.columns.map((column) => column.width)).toEqual([30, 14, 14]);
  });

  it('stores dangerous text as plain guarded string cells, never as formulas, and numbers as numbers', async () => {
    const rows: Row[] = DANGEROUS.map((label, index) => ({
      label,
      estimate: -0.0123 * (index + 1),
      mixed: label,
    }));
    rows.push({ label: 'number in a mixed column', estimate: null, mixed: -7 });
    const sheet = (await written(rows)).getWorksheet('Sheet')!;
    DANGEROUS.forEach((text, index) => {
      const row = sheet.getRow(index + 2);
      for (const column of [1, 3]) {
        const cell = row.getCell(column);
        expect(cell.type).toBe(ExcelJS.ValueType.String);
        expect(cell.formula).toBeUndefined();
        // A raw CR inside the sheet XML reads back as LF (XML 1.0 §2.11, end-of-line handling).
        expect(cell.value).toBe(`'${text}`.replace('\r', '\n'));
      }
      expect(row.getCell(2).type).toBe(ExcelJS.ValueType.Number);
      expect(row.getCell(2).value).toBe(-0.0123 * (index + 1));
    });
    const last = sheet.getRow(DANGEROUS.length + 2);
    expect(last.getCell(2).type).toBe(ExcelJS.ValueType.Null);
    expect(last.getCell(3).value).toBe(-7);
  });
});
