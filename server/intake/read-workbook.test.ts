import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { FileReadError } from './file-read-error.ts';
import { readWorkbook } from './read-workbook.ts';

// Workbooks are built here with exceljs (the same library the reader uses for the ZIP/XML layer);
// the container signatures checked are those of the ZIP format (PKWARE APPNOTE 4.3.7, local file
// header 0x04034b50) and the OLE compound file (MS-CFB §2.2, header 0xE11AB1A1E011CFD0), in which
// an encrypted OOXML file stores its "EncryptedPackage" stream (MS-OFFCRYPTO §2.3.4.4).
async function workbookBytes(build: (workbook: ExcelJS.Workbook) => void): Promise<Uint8Array> {
  const workbook = new ExcelJS.Workbook();
  build(workbook);
  return new Uint8Array(await workbook.xlsx.writeBuffer());
}

async function codeOf(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
    return 'no error';
  } catch (error) {
    expect(error).toBeInstanceOf(FileReadError);
    return (error as FileReadError).code;
  }
}

describe('readWorkbook', () => {
  it('reads values, formulas (cached or not), rich text, hyperlinks, errors and dates', async () => {
    const bytes = await workbookBytes((workbook) => {
      const sheet = workbook.addWorksheet('Long term');
      sheet.addRow(['Month', 'Assay', 'Batch']);
      sheet.addRow([0, 100.2, 'VZ-001']);
      sheet.addRow([3, { formula: 'B2-1.1' }, 'VZ-001']);
      sheet.addRow([
        6,
        { formula: 'B2-2.1', result: 98.1 },
        { richText: [{ text: 'VZ-' }, { text: '001' }] },
      ]);
      sheet.addRow([
        new Date(Date.UTC(2024, 0, 15)),
        { error: '#N/A' },
        { text: 'VZ-002', hyperlink: 'https://example.org' },
      ]);
      sheet.addRow([true, null, null]);
    });
    const [sheet] = await readWorkbook(bytes);
    expect(sheet?.name).toBe('Long term');
    expect(sheet?.rows).toEqual([
      ['Month', 'Assay', 'Batch'],
      [0, 100.2, 'VZ-001'],
      [3, { formulaWithoutValue: 'B2-1.1' }, 'VZ-001'],
      [6, 98.1, 'VZ-001'],
      [new Date(Date.UTC(2024, 0, 15)), '#N/A', 'VZ-002'],
      [true],
    ]);
  });

  it('lists merged blocks and keeps their content in the top-left cell only', async () => {
    const bytes = await workbookBytes((workbook) => {
      const sheet = workbook.addWorksheet('Sheet1');
      sheet.getCell('A1').value = 'Time (h)';
      sheet.getCell('B1').value = 'Result';
      sheet.getCell('B2').value = 'Assay';
      sheet.getCell('C2').value = 'Impurity';
      sheet.mergeCells('A1:A2');
      sheet.mergeCells('B1:C1');
      sheet.getCell('A3').value = 0;
    });
    const [sheet] = await readWorkbook(bytes);
    expect(sheet?.rows).toEqual([['Time (h)', 'Result'], [null, 'Assay', 'Impurity'], [0]]);
    expect(sheet?.merges).toEqual(
      expect.arrayContaining([
        { top: 0, left: 0, bottom: 1, right: 0 },
        { top: 0, left: 1, bottom: 0, right: 2 },
      ]),
    );
  });

  it('returns every sheet in workbook order, empty ones included', async () => {
    const bytes = await workbookBytes((workbook) => {
      workbook.addWorksheet('25 C').addRow(['t', 'y']);
      workbook.addWorksheet('Empty');
      workbook.addWorksheet('40 C').addRow(['t', 'y']);
    });
    const sheets = await readWorkbook(bytes);
    expect(sheets.map((sheet) => [sheet.name, sheet.rows.length])).toEqual([
      ['25 C', 1],
      ['Empty', 0],
      ['40 C', 1],
    ]);
  });

  it('tells apart empty, password-protected, old-format, foreign and truncated files', async () => {
    const ole = [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1];
    const encrypted = new Uint8Array(
      Buffer.concat([Buffer.from(ole), Buffer.alloc(504), Buffer.from('EncryptedPackage', 'utf16le')]),
    );
    const legacy = new Uint8Array(
      Buffer.concat([Buffer.from(ole), Buffer.alloc(504), Buffer.from('Workbook', 'utf16le')]),
    );
    const valid = await workbookBytes((workbook) => {
      const sheet = workbook.addWorksheet('S');
      for (let row = 0; row < 200; row += 1) sheet.addRow([row, 100 - row / 10]);
    });
    expect(await codeOf(readWorkbook(new Uint8Array()))).toBe('empty-file');
    expect(await codeOf(readWorkbook(encrypted))).toBe('password-protected');
    expect(await codeOf(readWorkbook(legacy))).toBe('legacy-workbook');
    expect(await codeOf(readWorkbook(new Uint8Array(Buffer.from('%PDF-1.7\n'))))).toBe('not-a-workbook');
    expect(await codeOf(readWorkbook(valid.subarray(0, Math.floor(valid.length / 2))))).toBe(
      'damaged-workbook',
    );
  });
});
