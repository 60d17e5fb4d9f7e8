import { crc32, deflateRawSync } from 'node:zlib';
import { eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseWorkerReads } from '../../server/features/intake/parse-pool.ts';
import { zipEntries } from '../../server/features/intake/readers/xlsx-zip-entries.ts';
import { auditEvents, studies, uploads } from '../../server/platform/db/schema/index.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Hostile and unusable files are refused at upload with a 422 naming the part, sheet, row or
 * line, and nothing is kept: no upload row, no audit event. The hostile workbooks are made here
 * from a valid one written by exceljs, with parts added or replaced and the archive written again
 * (PKWARE APPNOTE.TXT 6.3.10: §4.3.7 local header, §4.3.12 central directory header, §4.3.16 end
 * of central directory record). Part names and content types of macros are Microsoft's
 * ([MS-OFFMACRO2], from memory); external relationships are ECMA-376 Part 2's `TargetMode`.
 */

let world: TestWorld;
let studyId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
  const [study] = await world.database.db
    .insert(studies)
    .values({
      organisationId: world.organisationId,
      title: 'Hostile uploads',
      product: 'Orvellin 250 mg (invented)',
      attribute: 'Assay',
      unit: '% of label claim',
      direction: 'decreasing',
      lowerLimit: 95,
      createdBy: world.users.analyst!.id,
    })
    .returning();
  studyId = study!.id;
  ({ agent: analyst } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password));
  token = csrfFrom((await analyst.get('/')).text);
});
afterAll(() => world.close());

const ROWS = [
  ['Batch', 'Month', 'Assay'],
  ['OR-2401', 0, 100.2],
  ['OR-2401', 3, 99.1],
  ['OR-2401', 6, 98.3],
];

async function workbook(fill: (sheet: ExcelJS.Worksheet) => void = (sheet) => sheet.addRows(ROWS)) {
  const book = new ExcelJS.Workbook();
  fill(book.addWorksheet('Sheet1'));
  return Buffer.from(await book.xlsx.writeBuffer());
}

/** The parts of an archive, read with the intake's own bounded reader. */
function partsOf(bytes: Buffer): Map<string, Buffer> {
  const zip = zipEntries(bytes);
  return new Map(zip.names.map((name) => [name, zip.read(name)!]));
}

/** A ZIP archive of these parts, each deflated (APPNOTE §4.3.7, §4.3.12, §4.3.16). */
function zipOf(parts: Map<string, Buffer>): Buffer {
  const chunks: Buffer[] = [];
  const directory: Buffer[] = [];
  let offset = 0;
  for (const [partName, data] of parts) {
    const packed = deflateRawSync(data);
    const name = Buffer.from(partName, 'utf8');
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(8, 8);
    local.writeUInt32LE(crc32(data), 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(data.length, 22);
    local.writeUInt16LE(name.length, 26);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(8, 10);
    central.writeUInt32LE(crc32(data), 16);
    central.writeUInt32LE(packed.length, 20);
    central.writeUInt32LE(data.length, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt32LE(offset, 42);
    chunks.push(local, name, packed);
    directory.push(central, name);
    offset += 30 + name.length + packed.length;
  }
  const directoryBytes = Buffer.concat(directory);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(parts.size, 8);
  end.writeUInt16LE(parts.size, 10);
  end.writeUInt32LE(directoryBytes.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...chunks, directoryBytes, end]);
}

/** A valid workbook with some parts changed or added. */
async function altered(change: (parts: Map<string, Buffer>) => void): Promise<Buffer> {
  const parts = partsOf(await workbook());
  change(parts);
  return zipOf(parts);
}

function edit(parts: Map<string, Buffer>, name: string, rewrite: (xml: string) => string) {
  const xml = parts.get(name)?.toString('utf8');
  expect(xml, name).toBeDefined();
  const changed = rewrite(xml!);
  expect(changed, `${name} was changed`).not.toBe(xml);
  parts.set(name, Buffer.from(changed, 'utf8'));
}

const upload = (bytes: Buffer, name: string) =>
  analyst.post(`/api/studies/${studyId}/uploads`).set('x-csrf-token', token).attach('file', bytes, name);

const counts = async () => ({
  uploads: await world.database.db.$count(uploads, eq(uploads.organisationId, world.organisationId)),
  events: await world.database.db.$count(auditEvents, eq(auditEvents.organisationId, world.organisationId)),
});

/** A 422 whose message matches and names what it should, with its code; nothing kept. */
async function expectRefused(bytes: Buffer, name: string, code: string, message: RegExp) {
  const before = await counts();
  const response = await upload(bytes, name);
  expect(response.status, name).toBe(422);
  expect(response.body.error.message).toMatch(message);
  expect(response.body.error.details).toEqual({ code });
  expect(await counts()).toEqual(before);
}

describe('hostile workbooks are refused at upload, naming the part, and nothing is kept', () => {
  it('the unaltered workbook is accepted (the alterations below are what is refused)', async () => {
    expect((await upload(zipOf(partsOf(await workbook())), 'plain.xlsx')).status).toBe(201);
  });

  it('a VBA project (xl/vbaProject.bin), as an .xlsm holds it', async () => {
    const bytes = await altered((parts) => {
      parts.set('xl/vbaProject.bin', Buffer.from('\xd0\xcf\x11\xe0 not really a VBA project', 'latin1'));
      edit(parts, '[Content_Types].xml', (xml) =>
        xml.replace(
          '</Types>',
          '<Default Extension="bin" ContentType="application/vnd.ms-office.vbaProject"/></Types>',
        ),
      );
    });
    await expectRefused(bytes, 'macros.xlsm', 'macro-content', /contains macros .*"xl\/vbaProject\.bin"/);
  });

  it('a macro-enabled content type alone (the workbook part declared macro-enabled)', async () => {
    const bytes = await altered((parts) =>
      edit(parts, '[Content_Types].xml', (xml) =>
        xml.replace(
          'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml',
          'application/vnd.ms-excel.sheet.macroEnabled.main+xml',
        ),
      ),
    );
    await expectRefused(bytes, 'macro-type.xlsx', 'macro-content', /contains macros .*"xl\/workbook\.xml"/);
  });

  it('an entity declaration in a sheet ("billion laughs"), and a DOCTYPE in the shared strings', async () => {
    const bomb = await altered((parts) =>
      edit(parts, 'xl/worksheets/sheet1.xml', (xml) =>
        xml
          .replace(
            /^(<\?xml[^>]*\?>)?/,
            (declaration) =>
              `${declaration}<!DOCTYPE worksheet [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">]>`,
          )
          .replace('<v>100.2</v>', '<v>&b;</v>'),
      ),
    );
    await expectRefused(
      bomb,
      'entities.xlsx',
      'xml-declaration',
      /part "xl\/worksheets\/sheet1\.xml" declares a document type or entities/,
    );
    const doctype = await altered((parts) =>
      edit(parts, 'xl/sharedStrings.xml', (xml) =>
        xml.replace(
          /^(<\?xml[^>]*\?>)?/,
          (declaration) => `${declaration}<!DOCTYPE sst SYSTEM "file:///etc/passwd">`,
        ),
      ),
    );
    await expectRefused(doctype, 'doctype.xlsx', 'xml-declaration', /part "xl\/sharedStrings\.xml"/);
  });

  it('a link to another workbook (xl/externalLinks/…)', async () => {
    const bytes = await altered((parts) =>
      parts.set(
        'xl/externalLinks/externalLink1.xml',
        Buffer.from(
          '<?xml version="1.0" encoding="UTF-8"?><externalLink xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><externalBook/></externalLink>',
        ),
      ),
    );
    await expectRefused(
      bytes,
      'linked.xlsx',
      'external-reference',
      /refers to content outside the file .*"xl\/externalLinks\/externalLink1\.xml"/,
    );
  });

  it('an external relationship (TargetMode="External"): a picture linked from an address, a hyperlink to a network share', async () => {
    const picture = await altered((parts) =>
      parts.set(
        'xl/worksheets/_rels/sheet1.xml.rels',
        Buffer.from(
          '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId9" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/image" Target="http://example.invalid/pixel.png" TargetMode="External"/></Relationships>',
        ),
      ),
    );
    await expectRefused(
      picture,
      'linked-picture.xlsx',
      'external-reference',
      /"xl\/worksheets\/_rels\/sheet1\.xml\.rels", which points to "http:\/\/example\.invalid\/pixel\.png"/,
    );
    const share = await workbook((sheet) => {
      sheet.addRows(ROWS);
      sheet.getCell('D1').value = { text: 'SOP', hyperlink: 'file://attacker.invalid/share/sop.xlsx' };
    });
    await expectRefused(
      share,
      'share-link.xlsx',
      'external-reference',
      /points to "file:\/\/attacker\.invalid/,
    );
  });

  it('a cell hyperlink to a web address is kept: it fetches nothing until clicked, and reads as its text', async () => {
    const bytes = await workbook((sheet) => {
      sheet.addRows(ROWS);
      sheet.getCell('D1').value = { text: 'SOP', hyperlink: 'https://example.invalid/sop' };
    });
    expect((await upload(bytes, 'sop-link.xlsx')).status).toBe(201);
  });
});

describe('files no mapping could import are refused at upload, naming the sheet and rows', () => {
  it('a header only (CSV and workbook)', async () => {
    await expectRefused(
      Buffer.from('Batch,Month,Assay\n'),
      'header.csv',
      'nothing-to-import',
      /The sheet "header" has no row of results \(its 1 row holds text only/,
    );
    await expectRefused(
      await workbook((sheet) => sheet.addRow(ROWS[0]!)),
      'header.xlsx',
      'nothing-to-import',
      /The sheet "Sheet1" has no row of results/,
    );
  });

  it('a single point: the sheet and its one row named', async () => {
    await expectRefused(
      Buffer.from('Month,Assay\n0,100.1\n'),
      'single.csv',
      'nothing-to-import',
      /The sheet "single" has a single row of results \(row 2\)\. A rate needs results at two or more times/,
    );
  });

  it('several sheets, none usable: each sheet named', async () => {
    const book = new ExcelJS.Workbook();
    book.addWorksheet('Notes').addRow(['Prepared by', 'QX']);
    book.addWorksheet('Long term').addRows([ROWS[0]!, ROWS[1]!]);
    await expectRefused(
      Buffer.from(await book.xlsx.writeBuffer()),
      'two-sheets.xlsx',
      'nothing-to-import',
      /No sheet can be imported: "Notes" has no row of results .*; "Long term" has a single row of results \(row 2\)/,
    );
  });
});

describe('files are read in a parse worker, within limits on line length, columns and cells', () => {
  it('an accepted upload was read by a worker thread, not on the event loop', async () => {
    const before = parseWorkerReads();
    expect((await upload(Buffer.from('Month,Assay\n0,100.1\n3,99.4\n'), 'worker.csv')).status).toBe(201);
    expect(parseWorkerReads()).toBeGreaterThan(before);
  });

  it('one 10 MB line: refused naming the line and the limit', async () => {
    await expectRefused(
      Buffer.from(`Month,Assay,${'9,'.repeat(5_000_000)}\n`),
      'one-line.csv',
      'too-large-to-read',
      /Line 1 of the CSV file is 10,000,012 characters long; Rateledger reads lines of at most 100,000 characters/,
    );
    // An old Mac file (CR line ends) is many lines, not one: accepted.
    expect((await upload(Buffer.from('Month,Assay\r0,100.1\r3,99.4\r'), 'mac.csv')).status).toBe(201);
  });

  it('10,000 columns: refused naming the sheet, the row and the last column (CSV and workbook)', async () => {
    const header = Array.from({ length: 10_000 }, (_, index) => `c${index}`);
    const values = Array.from({ length: 10_000 }, (_, index) => index);
    await expectRefused(
      Buffer.from(`${header.join(',')}\n${values.join(',')}\n${values.join(',')}\n`),
      'wide.csv',
      'too-large-to-read',
      /Row 1 of the sheet "wide" has 10,000 columns \(to column NTP\); Rateledger reads at most 1,000 columns/,
    );
    await expectRefused(
      await workbook((sheet) =>
        sheet.addRows([
          ['Month', 'Assay'],
          [0, 100.1],
          [3, 99.4, ...values],
        ]),
      ),
      'wide.xlsx',
      'too-large-to-read',
      /Row 3 of the sheet "Sheet1" has 10,002 columns/,
    );
  });

  it('more than 2,000,000 cells: refused naming where the limit was reached', async () => {
    const row = Array.from({ length: 500 }, () => '1').join(',');
    const text = `${Array.from({ length: 4_100 }, () => row).join('\n')}\n`;
    expect(text.length).toBeLessThan(10 * 1024 * 1024);
    await expectRefused(
      Buffer.from(text),
      'many-cells.csv',
      'too-large-to-read',
      /more than 2,000,000 cells \(reached at row 4001 of the sheet "many-cells"\)/,
    );
  });
});
