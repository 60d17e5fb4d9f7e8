import { crc32, deflateRawSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { FileReadError } from './file-read-error.ts';
import { readWorkbook } from './read-workbook.ts';
import { MAX_EXPANDED_BYTES, ZipDamaged, ZipTooLarge, zipEntries } from './xlsx-zip-entries.ts';

/**
 * The ZIP reader's limits and its ZIP64 support, on archives written here byte by byte after
 * PKWARE APPNOTE.TXT 6.3.10: §4.3.7 local file header, §4.3.12 central directory header, §4.3.14
 * ZIP64 end of central directory record, §4.3.15 its locator, §4.3.16 end of central directory
 * record, §4.5.3 ZIP64 extended information extra field.
 */

interface Part {
  name: string;
  data: Buffer;
  /** Size written into the headers instead of the true one (a crafted archive). */
  declaredSize?: number;
}

function zipOf(parts: Part[], options: { zip64?: boolean } = {}): Uint8Array {
  const zip64 = options.zip64 ?? false;
  const chunks: Buffer[] = [];
  const directory: Buffer[] = [];
  let offset = 0;
  for (const part of parts) {
    const packed = deflateRawSync(part.data);
    const size = part.declaredSize ?? part.data.length;
    const name = Buffer.from(part.name, 'utf8');
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(zip64 ? 45 : 20, 4);
    local.writeUInt16LE(8, 8);
    local.writeUInt32LE(crc32(part.data), 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(size, 22);
    local.writeUInt16LE(name.length, 26);
    // ZIP64 extra field with uncompressed size, compressed size, local header offset (§4.5.3).
    const extra = Buffer.alloc(zip64 ? 28 : 0);
    if (zip64) {
      extra.writeUInt16LE(0x0001, 0);
      extra.writeUInt16LE(24, 2);
      extra.writeBigUInt64LE(BigInt(size), 4);
      extra.writeBigUInt64LE(BigInt(packed.length), 12);
      extra.writeBigUInt64LE(BigInt(offset), 20);
    }
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(zip64 ? 45 : 20, 4);
    central.writeUInt16LE(zip64 ? 45 : 20, 6);
    central.writeUInt16LE(8, 10);
    central.writeUInt32LE(crc32(part.data), 16);
    central.writeUInt32LE(zip64 ? 0xffffffff : packed.length, 20);
    central.writeUInt32LE(zip64 ? 0xffffffff : size, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt16LE(extra.length, 30);
    central.writeUInt32LE(zip64 ? 0xffffffff : offset, 42);
    chunks.push(local, name, packed);
    directory.push(central, name, extra);
    offset += 30 + name.length + packed.length;
  }
  const directoryBytes = Buffer.concat(directory);
  const tail: Buffer[] = [];
  if (zip64) {
    const record = Buffer.alloc(56);
    record.writeUInt32LE(0x06064b50, 0);
    record.writeBigUInt64LE(44n, 4);
    record.writeUInt16LE(45, 12);
    record.writeUInt16LE(45, 14);
    record.writeBigUInt64LE(BigInt(parts.length), 24);
    record.writeBigUInt64LE(BigInt(parts.length), 32);
    record.writeBigUInt64LE(BigInt(directoryBytes.length), 40);
    record.writeBigUInt64LE(BigInt(offset), 48);
    const locator = Buffer.alloc(20);
    locator.writeUInt32LE(0x07064b50, 0);
    locator.writeBigUInt64LE(BigInt(offset + directoryBytes.length), 8);
    locator.writeUInt32LE(1, 16);
    tail.push(record, locator);
  }
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(zip64 ? 0xffff : parts.length, 8);
  end.writeUInt16LE(zip64 ? 0xffff : parts.length, 10);
  end.writeUInt32LE(zip64 ? 0xffffffff : directoryBytes.length, 12);
  end.writeUInt32LE(zip64 ? 0xffffffff : offset, 16);
  tail.push(end);
  return new Uint8Array(Buffer.concat([...chunks, directoryBytes, ...tail]));
}

const MAIN = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';
const RELS = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';
const text = (value: string) => Buffer.from(value, 'utf8');

/** A one-sheet workbook (ECMA-376 Part 1 §18.2.27 workbook, §18.3.1.99 worksheet). */
function workbookParts(sheetData: string, prefixed = false): Part[] {
  const workbook = prefixed
    ? `<x:workbook xmlns:x="http://schemas.openxmlformats.org/spreadsheetml/2006/main" ${RELS}><x:sheets><x:sheet name="Pulls" sheetId="1" r:id="rId1"/></x:sheets></x:workbook>`
    : `<workbook ${MAIN} ${RELS}><sheets><sheet name="Pulls" sheetId="1" r:id="rId1"/></sheets></workbook>`;
  return [
    {
      name: '[Content_Types].xml',
      data: text(
        '<?xml version="1.0"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>',
      ),
    },
    {
      name: '_rels/.rels',
      data: text(
        '<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>',
      ),
    },
    { name: 'xl/workbook.xml', data: text(`<?xml version="1.0"?>\n${workbook}`) },
    {
      name: 'xl/_rels/workbook.xml.rels',
      data: text(
        '<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>',
      ),
    },
    {
      name: 'xl/worksheets/sheet1.xml',
      data: text(`<?xml version="1.0"?>\n<worksheet ${MAIN}><sheetData>${sheetData}</sheetData></worksheet>`),
    },
  ];
}

async function failure(promise: Promise<unknown>): Promise<FileReadError> {
  try {
    await promise;
  } catch (error) {
    expect(error).toBeInstanceOf(FileReadError);
    return error as FileReadError;
  }
  throw new Error('expected the read to fail');
}

const ROWS = '<row r="1"><c r="A1"><v>0</v></c><c r="B1"><v>100.2</v></c></row>';

describe('zipEntries', () => {
  it('reads a ZIP64 archive (APPNOTE §4.3.14–4.3.15, §4.5.3) exactly as the plain one', async () => {
    const plain = zipOf(workbookParts(ROWS));
    const zip64 = zipOf(workbookParts(ROWS), { zip64: true });
    const a = zipEntries(plain);
    const b = zipEntries(zip64);
    expect(b.names).toEqual(a.names);
    for (const name of a.names) expect(b.read(name)?.equals(a.read(name)!)).toBe(true);
    expect(await readWorkbook(zip64)).toEqual([{ name: 'Pulls', rows: [[0, 100.2]], merges: [] }]);
  });

  it('refuses an archive declaring more than the limit before inflating anything', async () => {
    const parts = workbookParts(ROWS);
    parts.push({ name: 'xl/media/image1.png', data: text('tiny'), declaredSize: MAX_EXPANDED_BYTES });
    expect(() => zipEntries(zipOf(parts))).toThrow(ZipTooLarge);
    const error = await failure(readWorkbook(zipOf(parts)));
    expect(error.code).toBe('workbook-too-large');
    expect(error.message).toMatch(
      /would unpack to 201 MB; Rateledger opens workbooks that unpack to at most 200 MB/,
    );
  });

  it('stops a part that holds more than it declares (a ZIP bomb) at its declared size', async () => {
    // 64 MiB of zeros deflate to about 64 kB; the headers claim 2 kB.
    const bomb: Part = {
      name: 'xl/worksheets/sheet1.xml',
      data: Buffer.alloc(64 * 1024 * 1024),
      declaredSize: 2048,
    };
    const parts = workbookParts(ROWS).map((part) => (part.name === bomb.name ? bomb : part));
    const archive = zipOf(parts);
    expect(archive.length).toBeLessThan(200_000);
    expect(() => zipEntries(archive).read(bomb.name)).toThrow(ZipDamaged);
    const error = await failure(readWorkbook(archive));
    expect(error.code).toBe('damaged-workbook');
    expect(error.message).toContain('does not inflate to its declared 2048 bytes');
  });

  it('checks every part before the general reader unpacks the archive whole', async () => {
    // Prefixed element names send the workbook to the general reader (exceljs), which inflates
    // every part without limits; a crafted part the fast reader never opens must stop it first.
    const parts = workbookParts(ROWS.replaceAll('<', '<x:').replaceAll('<x:/', '</x:'), true);
    parts.push({ name: 'xl/media/image1.png', data: Buffer.alloc(32 * 1024 * 1024), declaredSize: 16 });
    const error = await failure(readWorkbook(zipOf(parts)));
    expect(error.code).toBe('damaged-workbook');
    expect(error.message).toContain('xl/media/image1.png does not inflate to its declared 16 bytes');
  });

  it('answers every corrupted directory with a FileReadError, never another exception (common practice: fuzzing)', async () => {
    const archive = zipOf(workbookParts(ROWS), { zip64: true });
    const directoryStart = archive.length - 400; // the central directory, ZIP64 records and end record
    let seed = 20261202;
    const random = () => {
      seed = (seed * 1103515245 + 12345) % 2 ** 31; // a fixed linear congruential sequence
      return seed / 2 ** 31;
    };
    const codes = new Set<string>();
    for (let trial = 0; trial < 300; trial += 1) {
      const damaged = new Uint8Array(archive);
      for (let flips = 0; flips < 3; flips += 1) {
        const at = directoryStart + Math.floor(random() * (archive.length - directoryStart));
        damaged[at] = Math.floor(random() * 256);
      }
      try {
        await readWorkbook(damaged);
        codes.add('read');
      } catch (error) {
        expect(error, `trial ${trial}`).toBeInstanceOf(FileReadError);
        codes.add((error as FileReadError).code);
      }
    }
    expect(codes.has('damaged-workbook')).toBe(true);
  });
});
