/**
 * The named files inside an in-memory ZIP archive (an .xlsx is one), read from its central
 * directory and inflated with Node's zlib, so the workbook reader never decompresses a part it
 * does not need (images, themes, printer settings) and never copies the archive.
 *
 * How: the end-of-central-directory record (the last 22 bytes plus an optional comment) gives the
 * number of entries and where the central directory starts; each central-directory header gives a
 * name, the compression method, the CRC-32, the sizes and where the entry's local header is. An
 * entry is "stored" (method 0) or "deflated" (method 8); its CRC-32 is checked after inflating.
 * Reference: PKWARE APPNOTE.TXT 6.3.10, sections 4.3.7 (local file header), 4.3.12 (central
 * directory header) and 4.3.16 (end of central directory record).
 *
 * Anything this small reader does not handle — ZIP64 archives, encrypted entries, other
 * compression methods, a missing or inconsistent directory (a truncated file), a CRC mismatch — is
 * reported as `ZipUnsupported`, and the caller falls back to the general reader, which either
 * reads the file or gives the message the analyst sees.
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

const END_OF_DIRECTORY_SIGNATURE = 0x06054b50;
const DIRECTORY_HEADER_SIGNATURE = 0x02014b50;
const LOCAL_HEADER_SIGNATURE = 0x04034b50;
const END_OF_DIRECTORY_SIZE = 22;
const MAX_COMMENT_LENGTH = 0xffff;
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
  throw new ZipUnsupported('no end-of-central-directory record (truncated archive?)');
}

export function zipEntries(content: Uint8Array): ZipEntries {
  const bytes = Buffer.from(content.buffer, content.byteOffset, content.byteLength);
  if (bytes.length < END_OF_DIRECTORY_SIZE) throw new ZipUnsupported('too short for a ZIP archive');
  const end = findEndOfDirectory(bytes);
  const count = bytes.readUInt16LE(end + 10);
  const directorySize = bytes.readUInt32LE(end + 12);
  const directoryOffset = bytes.readUInt32LE(end + 16);
  if (count === ZIP64_MARKER_16 || directoryOffset === ZIP64_MARKER_32) throw new ZipUnsupported('ZIP64');
  if (directoryOffset + directorySize > end) throw new ZipUnsupported('central directory out of range');
  const entries = new Map<string, DirectoryEntry>();
  let offset = directoryOffset;
  for (let index = 0; index < count; index += 1) {
    if (offset + 46 > end || bytes.readUInt32LE(offset) !== DIRECTORY_HEADER_SIGNATURE)
      throw new ZipUnsupported('damaged central directory');
    const nameLength = bytes.readUInt16LE(offset + 28);
    const extraLength = bytes.readUInt16LE(offset + 30);
    const commentLength = bytes.readUInt16LE(offset + 32);
    const name = bytes.toString('utf8', offset + 46, offset + 46 + nameLength).replace(/^\//, '');
    entries.set(name, {
      flags: bytes.readUInt16LE(offset + 8),
      method: bytes.readUInt16LE(offset + 10),
      crc: bytes.readUInt32LE(offset + 16),
      compressedSize: bytes.readUInt32LE(offset + 20),
      size: bytes.readUInt32LE(offset + 24),
      localHeaderOffset: bytes.readUInt32LE(offset + 42),
    });
    offset += 46 + nameLength + extraLength + commentLength;
  }

  const read = (name: string): Buffer | undefined => {
    const entry = entries.get(name);
    if (!entry) return undefined;
    if (entry.flags & ENCRYPTED_FLAG) throw new ZipUnsupported('encrypted entry');
    if (entry.size === ZIP64_MARKER_32 || entry.compressedSize === ZIP64_MARKER_32)
      throw new ZipUnsupported('ZIP64 entry');
    const local = entry.localHeaderOffset;
    if (local + 30 > bytes.length || bytes.readUInt32LE(local) !== LOCAL_HEADER_SIGNATURE)
      throw new ZipUnsupported('damaged local header');
    const start = local + 30 + bytes.readUInt16LE(local + 26) + bytes.readUInt16LE(local + 28);
    const stop = start + entry.compressedSize;
    if (stop > bytes.length) throw new ZipUnsupported('entry runs past the end of the archive');
    const raw = bytes.subarray(start, stop);
    let data: Buffer;
    if (entry.method === METHOD_STORED) data = raw;
    else if (entry.method === METHOD_DEFLATED) {
      try {
        data = inflateRawSync(raw);
      } catch (error) {
        throw new ZipUnsupported(`inflate failed: ${(error as Error).message}`);
      }
    } else throw new ZipUnsupported(`compression method ${entry.method}`);
    if (data.length !== entry.size || crc32(data) !== entry.crc)
      throw new ZipUnsupported(`CRC or size mismatch in ${name}`);
    return data;
  };
  return { names: [...entries.keys()], read };
}
