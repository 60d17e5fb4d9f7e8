import { crc32, deflateRawSync } from 'node:zlib';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { FileReadError } from './file-read-error.ts';
import { readWithObjectModel, readWorkbook } from './read-workbook.ts';
import { xlsxSheetGrids } from './xlsx-sheet-grids.ts';
import { ZipUnsupported } from './xlsx-zip-entries.ts';

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

// The fast reader (xlsx-sheet-grids.ts) must give exactly what the exceljs object model gives.
// Parts are written here by hand, as Excel lays them out (sheets before styles and shared
// strings), into a ZIP built with Node's zlib (PKWARE APPNOTE 4.3.7 / 4.3.12 / 4.3.16).
function zipOf(parts: Record<string, string>): Uint8Array {
  const locals: Buffer[] = [];
  const directory: Buffer[] = [];
  let offset = 0;
  for (const [name, text] of Object.entries(parts)) {
    const data = Buffer.from(text, 'utf8');
    const packed = deflateRawSync(data);
    const nameBytes = Buffer.from(name, 'utf8');
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(8, 8);
    local.writeUInt32LE(crc32(data), 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(nameBytes.length, 26);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(8, 10);
    central.writeUInt32LE(crc32(data), 16);
    central.writeUInt32LE(packed.length, 20);
    central.writeUInt32LE(data.length, 24);
    central.writeUInt16LE(nameBytes.length, 28);
    central.writeUInt32LE(offset, 42);
    locals.push(local, nameBytes, packed);
    directory.push(central, nameBytes);
    offset += 30 + nameBytes.length + packed.length;
  }
  const directoryBytes = Buffer.concat(directory);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(Object.keys(parts).length, 8);
  end.writeUInt16LE(Object.keys(parts).length, 10);
  end.writeUInt32LE(directoryBytes.length, 12);
  end.writeUInt32LE(offset, 16);
  return new Uint8Array(Buffer.concat([...locals, directoryBytes, end]));
}

const MAIN = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';
const RELS = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';

function handWritten(
  sheetData: string,
  options: { strings?: string; after?: string; workbookPr?: string } = {},
) {
  return zipOf({
    '[Content_Types].xml':
      '<?xml version="1.0"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"/>',
    'xl/workbook.xml': `<?xml version="1.0" encoding="UTF-8"?>\n<workbook ${MAIN} ${RELS}>${options.workbookPr ?? ''}<sheets><sheet name="Pulls &amp; results" sheetId="1" r:id="rId1"/></sheets></workbook>`,
    'xl/_rels/workbook.xml.rels':
      '<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>',
    'xl/worksheets/sheet1.xml': `<?xml version="1.0"?>\n<worksheet ${MAIN} ${RELS}><sheetData>${sheetData}</sheetData>${options.after ?? ''}</worksheet>`,
    'xl/styles.xml': `<?xml version="1.0"?><styleSheet ${MAIN}><numFmts count="2"><numFmt numFmtId="164" formatCode="[&gt;=1]yyyy\\-mm\\-dd;General"/><numFmt numFmtId="165" formatCode="0.00&quot;h&quot;"/></numFmts><cellStyleXfs count="1"><xf numFmtId="14"/></cellStyleXfs><cellXfs count="5"><xf numFmtId="0"/><xf numFmtId="14" applyNumberFormat="1"/><xf numFmtId="164"/><xf numFmtId="165"/><xf numFmtId="2"><alignment horizontal="left"/></xf></cellXfs></styleSheet>`,
    ...(options.strings === undefined
      ? {}
      : { 'xl/sharedStrings.xml': `<?xml version="1.0"?><sst ${MAIN}>${options.strings}</sst>` }),
  });
}

async function expectSameAsObjectModel(bytes: Uint8Array) {
  const fast = xlsxSheetGrids(bytes);
  expect(fast).toEqual(await readWithObjectModel(bytes));
  return fast;
}

describe('the fast reader', () => {
  it('reads shared and inline strings, string results, shared formulas and date styles as exceljs does', async () => {
    const strings =
      '<si><t>Batch</t></si><si><r><rPr><b/></rPr><t>Assay </t></r><r><t xml:space="preserve">(%)</t></r></si>' +
      '<si><t>VZ-001</t><rPh sb="0" eb="1"><t>ignored</t></rPh></si><si><t>line_x000D_break</t></si>';
    const rows =
      '<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c><c r="C1" t="inlineStr"><is><t>Pulled</t></is></c></row>' +
      '<row r="2"><c r="A2" t="s"><v>2</v></c><c r="B2" s="4"><v>100.25</v></c><c r="C2" s="1"><v>45306</v></c><c r="D2" s="2"><v>45306.5</v></c><c r="E2" s="3"><v>12</v></c></row>' +
      '<row r="3"><c r="A3" t="str"><f>A2&amp;""</f><v>VZ-001 &amp;amp; co</v></c><c r="B3"><f t="shared" ref="B3:B4" si="0">B2-1</f><v>99.25</v></c><c r="C3" t="b"><v>1</v></c><c r="D3" t="e"><v>#DIV/0!</v></c></row>' +
      '<row r="4"><c r="A4" t="s"><v>3</v></c><c r="B4"><f t="shared" si="0"/></c><c r="C4" s="1"><f>C2+1</f><v>45307</v></c><c r="F4" s="1"/></row>' +
      '<row r="6" ht="20" customHeight="1"/>';
    const [sheet] = await expectSameAsObjectModel(handWritten(rows, { strings }));
    expect(sheet?.name).toBe('Pulls & results');
    expect(sheet?.rows).toEqual([
      ['Batch', 'Assay (%)', 'Pulled'],
      ['VZ-001', 100.25, new Date(Date.UTC(2024, 0, 15)), new Date(Date.UTC(2024, 0, 15, 12)), 12],
      ['VZ-001 & co', 99.25, true, '#DIV/0!'],
      ['line\rbreak', { formulaWithoutValue: 'B3' }, new Date(Date.UTC(2024, 0, 16))],
      [],
      [],
    ]);
  });

  it('empties merged-away cells, extends the sheet to a merge below the data, reads the 1904 date system', async () => {
    const rows =
      '<row r="1"><c r="A1" t="inlineStr"><is><t>Time (h)</t></is></c><c r="B1" t="inlineStr"><is><t>left over</t></is></c></row>' +
      '<row r="2"><c r="A2" s="1"><v>0</v></c><c r="B2"><v>1</v></c></row>';
    const after = '<mergeCells count="2"><mergeCell ref="A1:B1"/><mergeCell ref="B2:B4"/></mergeCells>';
    const [sheet] = await expectSameAsObjectModel(
      handWritten(rows, { after, workbookPr: '<workbookPr date1904="1"/>' }),
    );
    expect(sheet?.rows).toEqual([['Time (h)'], [new Date(Date.UTC(1904, 0, 1)), 1], [], []]);
    expect(sheet?.merges).toEqual([
      { top: 0, left: 0, bottom: 0, right: 1 },
      { top: 1, left: 1, bottom: 3, right: 1 },
    ]);
  });

  it('gives the workbooks written in the tests above exactly as exceljs reads them', async () => {
    const bytes = await workbookBytes((workbook) => {
      const sheet = workbook.addWorksheet('Long term');
      sheet.addRow(['Month', 'Assay', 'Batch']);
      sheet.addRow([0, 100.2, 'VZ-001']);
      sheet.addRow([3, { formula: 'B2-1.1' }, { richText: [{ text: 'VZ-' }, { text: '001' }] }]);
      sheet.addRow([
        new Date(Date.UTC(2024, 0, 15)),
        { error: '#N/A' },
        { text: 'VZ-002', hyperlink: 'https://example.org' },
      ]);
      sheet.mergeCells('A5:C6');
      workbook.addWorksheet('Empty');
      workbook.addWorksheet('Second').addRow(['t', 'y', '<&>"\'']);
    });
    expect((await expectSameAsObjectModel(bytes)).map((sheet) => sheet.name)).toEqual([
      'Long term',
      'Empty',
      'Second',
    ]);
  });

  it('reads indented XML as exceljs does', async () => {
    const rows =
      '\n  <row r="1">\n    <c r="A1" t="inlineStr">\n      <is><t>Month</t></is>\n    </c>\n    <c r="B1">\n      <v>98.5</v>\n    </c>\n  </row>\n';
    const [sheet] = await expectSameAsObjectModel(handWritten(rows));
    expect(sheet?.rows).toEqual([['Month', 98.5]]);
  });

  it('reads ISO date cells and rows and cells written without references (ECMA-376 §18.3.1.4, §18.18.11)', () => {
    // exceljs reads t="d" as the number before the first "-" and needs the r attributes.
    const rows =
      '<row><c t="inlineStr"><is><t>Pulled</t></is></c><c><v>3</v></c></row>' +
      '<row><c t="d"><v>2024-04-15T00:00:00</v></c><c r="C2"><v>98.1</v></c></row>';
    const [sheet] = xlsxSheetGrids(handWritten(rows));
    expect(sheet?.rows).toEqual([
      ['Pulled', 3],
      [new Date(Date.UTC(2024, 3, 15)), null, 98.1],
    ]);
  });

  it('leaves prefixed, damaged and truncated parts to the general reader', async () => {
    const prefixed = zipOf({
      'xl/workbook.xml': `<x:workbook xmlns:x="http://schemas.openxmlformats.org/spreadsheetml/2006/main"/>`,
      'xl/_rels/workbook.xml.rels': '<Relationships/>',
    });
    expect(() => xlsxSheetGrids(prefixed)).toThrow(ZipUnsupported);
    const valid = handWritten('<row r="1"><c r="A1"><v>1</v></c></row>');
    expect(() => xlsxSheetGrids(valid.subarray(0, valid.length - 30))).toThrow(ZipUnsupported);
    // One byte flipped in the last part's compressed data (just before the central directory).
    const corrupt = new Uint8Array(valid);
    const directoryOffset = Buffer.from(valid).readUInt32LE(valid.length - 6);
    corrupt[directoryOffset - 5] = (corrupt[directoryOffset - 5] ?? 0) ^ 0xff;
    expect(() => xlsxSheetGrids(corrupt)).toThrow(ZipUnsupported);
    expect(await codeOf(readWorkbook(corrupt))).toBe('damaged-workbook');
  });
});
