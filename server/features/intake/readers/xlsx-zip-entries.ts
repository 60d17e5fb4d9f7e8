/**
 * The named files inside an in-memory ZIP archive (an .xlsx is one), read from its central
 * directory and inflated with Node's zlib, so the workbook reader never decompresses a part it
 * does not need (images, themes, printer settings) and never copies the archive.
 *
 * How: the end-of-central-directory record (the last 22 bytes plus an optional comment) gives the
 * number of entries and where the central directory starts (the ZIP64 record, when the locator
 * before it is present, gives the 64-bit values); each central-directory header gives a name, the
 * compression method, the CRC-32, the sizes and where the entry's local header is (ZIP64 extra
 * field 0x0001 for values that do not fit 32 bits). An entry is "stored" (method 0) or
 * "deflated" (method 8); its CRC-32 is checked after inflating.
 * Reference: PKWARE APPNOTE.TXT 6.3.10, sections 4.3.7 (local file header), 4.3.12 (central
 * directory header), 4.3.14–4.3.16 (ZIP64 end of central directory record and locator, end of
 * central directory record) and 4.5.3 (ZIP64 extended information extra field).
 *
 * Expansion is bounded, so a small upload cannot unpack into gigabytes (a "ZIP bomb"): the sizes
 * the directory declares may add up to at most `MAX_EXPANDED_BYTES`, checked before anything is
 * inflated, and each entry is inflated with its declared size as the output limit, so an entry
 * that declares less than it holds stops there instead of growing.
 *
 * Errors: `ZipTooLarge` (expands past the limit) and `ZipDamaged` (unreadable directory, an entry
 * running past the end, bad deflate data, CRC or size mismatch, more data than declared) are final:
 * the caller reports them without trying another reader. `ZipUnsupported` — encrypted entries,
 * other compression methods, XML outside the fast reader's subset — means the general reader
 * should try. Both final errors extend `ZipUnsupported`, so code that only asks "did the fast
 * reader decline?" still sees them.
 *
 * Example: `zipEntries(bytes).read('xl/workbook.xml')` is that part's bytes, or undefined when the
 * archive has no such entry.
 */
import { crc32, inflateRawSync } from 'node:zlib';

/** Thrown for an archive this reader leaves to the general reader. */
export class ZipUnsupported extends Error {
  constructor(reason: string) {
    super(reason);
    this.name = 'ZipUnsupported';
  }
}

/** The archive is damaged (or crafted): no reader should go on with it. */
export class ZipDamaged extends ZipUnsupported {
  constructor(reason: string) {
    super(reason);
    this.name = 'ZipDamaged';
  }
}

/** The archive would expand past `MAX_EXPANDED_BYTES`. */
export class ZipTooLarge extends ZipUnsupported {
  readonly expandedBytes: number;
  constructor(expandedBytes: number) {
    super(`the archive declares ${expandedBytes} bytes when unpacked, more than ${MAX_EXPANDED_BYTES}`);
    this.name = 'ZipTooLarge';
    this.expandedBytes = expandedBytes;
  }
}

/**
 * The most an archive may unpack to, all entries together: 200 MiB. An upload is at most 10 MB,
 * and spreadsheet XML compresses about 5–10 times (common practice), so an honest workbook at the
 * upload limit stays well inside; a 100,000-row sheet unpacks to about 15 MB.
 */
export const MAX_EXPANDED_BYTES = 200 * 1024 * 1024;

const END_OF_DIRECTORY_SIGNATURE = 0x06054b50;
const DIRECTORY_HEADER_SIGNATURE = 0x02014b50;
const LOCAL_HEADER_SIGNATURE = 0x04034b50;
const END_OF_DIRECTORY_SIZE = 22;
const MAX_COMMENT_LENGTH = 0xffff;
const ZIP64_LOCATOR_SIGNATURE = 0x07064b50;
const ZIP64_END_SIGNATURE = 0x06064b50;
const ZIP64_LOCATOR_SIZE = 20;
const ZIP64_EXTRA_ID = 0x0001;
const ZIP64_MARKER_16 = 0xffff;
const ZIP64_MARKER_32 = 0xffffffff;
const ENCRYPTED_FLAG = 0x0001;
const METHOD_STORED = 0;
const METHOD_DEFLATED = 8;

interface DirectoryEntry {
  method: number;
  flags: number;
  crc: number;
  compressedSize: number;
  size: number;
  localHeaderOffset: number;
}

export interface ZipEntries {
  /** Entry names as stored, a leading "/" removed. */
  names: string[];
  /** The inflated bytes of an entry, or undefined when there is none of that name. */
  read(name: string): Buffer | undefined;
}

function findEndOfDirectory(bytes: Buffer): number {
  const earliest = Math.max(0, bytes.length - END_OF_DIRECTORY_SIZE - MAX_COMMENT_LENGTH);
  for (let offset = bytes.length - END_OF_DIRECTORY_SIZE; offset >= earliest; offset -= 1) {
    if (bytes.readUInt32LE(offset) === END_OF_DIRECTORY_SIGNATURE) return offset;
  }
  throw new ZipDamaged('no end-of-central-directory record (truncated archive?)');
}

/** A 64-bit little-endian value as a number; null beyond 2^53 (no real archive is that large). */
function readUInt64(bytes: Buffer, offset: number): number | null {
  const value = bytes.readBigUInt64LE(offset);
  return value <= BigInt(Number.MAX_SAFE_INTEGER) ? Number(value) : null;
}

/** Entry count, directory size and offset, from the end record or, when present, the ZIP64 one. */
function directoryLocation(bytes: Buffer, end: number): { count: number; size: number; offset: number } {
  let count = bytes.readUInt16LE(end + 10);
  let size = bytes.readUInt32LE(end + 12);
  let offset = bytes.readUInt32LE(end + 16);
  const locator = end - ZIP64_LOCATOR_SIZE;
  if (locator >= 0 && bytes.readUInt32LE(locator) === ZIP64_LOCATOR_SIGNATURE) {
    const record = readUInt64(bytes, locator + 8);
    if (record === null || record + 56 > locator || bytes.readUInt32LE(record) !== ZIP64_END_SIGNATURE)
      throw new ZipDamaged('damaged ZIP64 end of central directory');
    const count64 = readUInt64(bytes, record + 32);
    const size64 = readUInt64(bytes, record + 40);
    const offset64 = readUInt64(bytes, record + 48);
    if (count64 === null || size64 === null || offset64 === null)
      throw new ZipDamaged('damaged ZIP64 end of central directory');
    count = count64;
    size = size64;
    offset = offset64;
  } else if (count === ZIP64_MARKER_16 || offset === ZIP64_MARKER_32) {
    throw new ZipDamaged('ZIP64 markers without a ZIP64 end of central directory');
  }
  return { count, size, offset };
}

/** Replaces 32-bit fields marked 0xFFFFFFFF by their values from the ZIP64 extra field (APPNOTE 4.5.3). */
function applyZip64Extra(entry: DirectoryEntry, bytes: Buffer, start: number, length: number): void {
  let at = start;
  while (at + 4 <= start + length) {
    const id = bytes.readUInt16LE(at);
    const size = bytes.readUInt16LE(at + 2);
    if (id === ZIP64_EXTRA_ID) {
      let field = at + 4;
      const next = (): number => {
        if (field + 8 > Math.min(at + 4 + size, start + length))
          throw new ZipDamaged('damaged ZIP64 extra field');
        const value = readUInt64(bytes, field);
        field += 8;
        if (value === null) throw new ZipDamaged('damaged ZIP64 extra field');
        return value;
      };
      if (entry.size === ZIP64_MARKER_32) entry.size = next();
      if (entry.compressedSize === ZIP64_MARKER_32) entry.compressedSize = next();
      if (entry.localHeaderOffset === ZIP64_MARKER_32) entry.localHeaderOffset = next();
      return;
    }
    at += 4 + size;
  }
}

function readEntries(content: Uint8Array): ZipEntries {
  const bytes = Buffer.from(content.buffer, content.byteOffset, content.byteLength);
  if (bytes.length < END_OF_DIRECTORY_SIZE) throw new ZipDamaged('too short for a ZIP archive');
  const end = findEndOfDirectory(bytes);
  const directory = directoryLocation(bytes, end);
  if (directory.offset + directory.size > end) throw new ZipDamaged('central directory out of range');
  const entries = new Map<string, DirectoryEntry>();
  let offset = directory.offset;
  let declared = 0;
  for (let index = 0; index < directory.count; index += 1) {
    if (offset + 46 > end || bytes.readUInt32LE(offset) !== DIRECTORY_HEADER_SIGNATURE)
      throw new ZipDamaged('damaged central directory');
    const nameLength = bytes.readUInt16LE(offset + 28);
    const extraLength = bytes.readUInt16LE(offset + 30);
    const commentLength = bytes.readUInt16LE(offset + 32);
    const name = bytes.toString('utf8', offset + 46, offset + 46 + nameLength).replace(/^\//, '');
    const entry: DirectoryEntry = {
      flags: bytes.readUInt16LE(offset + 8),
      method: bytes.readUInt16LE(offset + 10),
      crc: bytes.readUInt32LE(offset + 16),
      compressedSize: bytes.readUInt32LE(offset + 20),
      size: bytes.readUInt32LE(offset + 24),
      localHeaderOffset: bytes.readUInt32LE(offset + 42),
    };
    applyZip64Extra(
      entry,
      bytes,
      offset + 46 + nameLength,
      Math.min(extraLength, end - offset - 46 - nameLength),
    );
    if (entry.size === ZIP64_MARKER_32 || entry.compressedSize === ZIP64_MARKER_32)
      throw new ZipDamaged('ZIP64 sizes without a ZIP64 extra field');
    declared += entry.size;
    if (declared > MAX_EXPANDED_BYTES) throw new ZipTooLarge(declared);
    entries.set(name, entry);
    offset += 46 + nameLength + extraLength + commentLength;
  }

  const read = (name: string): Buffer | undefined => {
    const entry = entries.get(name);
    if (!entry) return undefined;
    if (entry.flags & ENCRYPTED_FLAG) throw new ZipUnsupported('encrypted entry');
    const local = entry.localHeaderOffset;
    if (local + 30 > bytes.length || bytes.readUInt32LE(local) !== LOCAL_HEADER_SIGNATURE)
      throw new ZipDamaged('damaged local header');
    const start = local + 30 + bytes.readUInt16LE(local + 26) + bytes.readUInt16LE(local + 28);
    const stop = start + entry.compressedSize;
    if (stop > bytes.length) throw new ZipDamaged('entry runs past the end of the archive');
    const raw = bytes.subarray(start, stop);
    let data: Buffer;
    if (entry.method === METHOD_STORED) data = raw;
    else if (entry.method === METHOD_DEFLATED) {
      try {
        // The declared size is the limit: a part holding more than it declares stops here.
        data = inflateRawSync(raw, { maxOutputLength: Math.max(1, entry.size) });
      } catch (error) {
        throw new ZipDamaged(
          `${name} does not inflate to its declared ${entry.size} bytes: ${(error as Error).message}`,
        );
      }
    } else throw new ZipUnsupported(`compression method ${entry.method}`);
    if (data.length !== entry.size || crc32(data) !== entry.crc)
      throw new ZipDamaged(`CRC or size mismatch in ${name}`);
    return data;
  };
  return { names: [...entries.keys()], read };
}

/** Any read past a crafted field's bounds (a RangeError) is a damaged archive, never a crash. */
function damagedOnFailure<T>(step: () => T): T {
  try {
    return step();
  } catch (error) {
    if (error instanceof ZipUnsupported) throw error;
    throw new ZipDamaged(`unreadable ZIP structure: ${(error as Error).message}`);
  }
}

export function zipEntries(content: Uint8Array): ZipEntries {
  const entries = damagedOnFailure(() => readEntries(content));
  return { names: entries.names, read: (name) => damagedOnFailure(() => entries.read(name)) };
}

/**
 * Inflates every entry once within the limits above, so the general reader (which unpacks the
 * whole archive without limits) is only given archives known to stay small. Entries this reader
 * cannot unpack (encrypted, other methods) are left to the general reader, which refuses them.
 * Throws `ZipTooLarge` or `ZipDamaged`.
 */
export function assertBoundedExpansion(content: Uint8Array): void {
  const zip = zipEntries(content);
  for (const name of zip.names) {
    try {
      zip.read(name);
    } catch (error) {
      if (error instanceof ZipDamaged || error instanceof ZipTooLarge) throw error;
    }
  }
}
