/**
 * Sets a PDF's document information dictionary by an **incremental update** (ISO 32000-1
 * §7.5.6) instead of rewriting the file: Chromium's bytes stay exactly as printed, and after them
 * come one new information dictionary, the catalog again with `/ViewerPreferences
 * << /DisplayDocTitle true >>` when it did not ask for that already (viewers then show the title,
 * not the file name — PDF/UA asks for it; Chromium's tagged output does), a cross-reference
 * section holding just the new objects and a trailer whose /Info points to the new dictionary
 * and whose /Prev points to Chromium's cross-reference table.
 * A reader takes the document information from the last trailer (§7.5.5), so Title, Author,
 * Subject, Keywords, Creator, Producer and the dates are ours; Chromium's own dictionary stays
 * in the earlier revision, unreferenced.
 *
 * Why not load and save the whole document (pdf-lib): that parses every object of a ten-page
 * report and writes them all out again, about 15 ms of a 0.4 s render for a change of one
 * dictionary. This reads only the trailer, the catalog and the page tree root (for the page
 * count) through the cross-reference table.
 *
 * It handles what Chromium (Skia) writes — one classic cross-reference table, no /Prev, no
 * /Encrypt — and returns `null` for anything else (cross-reference streams, earlier updates,
 * encryption, anything it cannot read with certainty), so the caller can fall back to a full
 * rewrite.
 *
 * Text entries are written as UTF-16BE hex strings with a byte-order mark (§7.9.2.2), so any
 * name prints correctly; dates as `D:YYYYMMDDHHmmSSZ` in UTC (§7.9.4) — both serialised by
 * pdf-lib's `PDFHexString.fromText` and `PDFString.fromDate`.
 *
 * Reference: ISO 32000-1:2008 §7.5.4 (cross-reference table), §7.5.5 (trailer), §7.5.6
 * (incremental updates), §12.2 table 150 (viewer preferences), §14.3.3 table 317 (document
 * information dictionary).
 *
 * Example: appendDocumentInfo(chromiumPdf, { Title: 'Report', Producer: 'Rateledger' },
 * { CreationDate: new Date('2026-12-01T14:05:00Z') }) → { pdf: chromiumPdf followed by one update
 * section, pageCount: 10 }.
 */

import { PDFHexString, PDFString } from 'pdf-lib';

export interface DocumentInfoText {
  Title?: string;
  Author?: string;
  Subject?: string;
  Keywords?: string;
  Creator?: string;
  Producer?: string;
}

export interface DocumentInfoDates {
  CreationDate?: Date;
  ModDate?: Date;
}

const TAIL_BYTES = 2048;
/** Enough for a catalog or page-tree dictionary; Skia's are a few hundred bytes. */
const OBJECT_WINDOW_BYTES = 64 * 1024;

interface Trailer {
  size: number;
  root: { num: number; gen: number };
  id?: string;
}

function lastStartXref(pdf: Buffer): number | null {
  const tail = pdf.subarray(Math.max(0, pdf.length - TAIL_BYTES)).toString('latin1');
  const match = [...tail.matchAll(/startxref\s+(\d+)\s+%%EOF\s*$/g)].at(-1);
  if (!match?.[1]) return null;
  const offset = Number(match[1]);
  return Number.isSafeInteger(offset) && offset > 0 && offset < pdf.length ? offset : null;
}

/** Reads a classic cross-reference table and the trailer after it; null when it is anything else. */
function readXrefTable(
  pdf: Buffer,
  offset: number,
): { offsets: Map<number, number>; trailer: Trailer } | null {
  const end = pdf.indexOf('trailer', offset, 'latin1');
  if (end < 0) return null;
  const table = pdf.subarray(offset, end).toString('latin1');
  if (!/^xref\s/.test(table)) return null; // a cross-reference stream ("n 0 obj")
  const offsets = new Map<number, number>();
  const lines = table
    .slice(4)
    .split(/\r\n|\r|\n/)
    .map((line) => line.trim());
  let next = -1;
  let remaining = 0;
  for (const line of lines) {
    if (line === '') continue;
    if (remaining === 0) {
      const header = /^(\d+)\s+(\d+)$/.exec(line);
      if (!header) return null;
      next = Number(header[1]);
      remaining = Number(header[2]);
      continue;
    }
    const entry = /^(\d{10})\s+(\d{5})\s+([nf])$/.exec(line);
    if (!entry) return null;
    if (entry[3] === 'n') offsets.set(next, Number(entry[1]));
    next += 1;
    remaining -= 1;
  }
  if (remaining !== 0) return null;
  const trailerText = pdf.subarray(end, Math.min(pdf.length, end + TAIL_BYTES)).toString('latin1');
  const dictionary = /^trailer\s*<<([\s\S]*?)>>\s*startxref/.exec(trailerText)?.[1];
  if (dictionary === undefined) return null;
  if (/\/(Prev|Encrypt|XRefStm)\b/.test(dictionary)) return null;
  const size = /\/Size\s+(\d+)/.exec(dictionary);
  const root = /\/Root\s+(\d+)\s+(\d+)\s+R/.exec(dictionary);
  if (!size || !root) return null;
  const id = /\/ID\s*(\[[^\]]*\])/.exec(dictionary)?.[1];
  return {
    offsets,
    trailer: { size: Number(size[1]), root: { num: Number(root[1]), gen: Number(root[2]) }, id },
  };
}

/** The dictionary text of object `num gen` at `offset` (between `obj` and `endobj`); null when not there. */
function objectText(pdf: Buffer, offset: number | undefined, num: number, gen: number): string | null {
  if (offset === undefined) return null;
  const text = pdf.subarray(offset, Math.min(pdf.length, offset + OBJECT_WINDOW_BYTES)).toString('latin1');
  const header = new RegExp(`^${num}\\s+${gen}\\s+obj\\b`).exec(text);
  if (!header) return null;
  const end = text.indexOf('endobj', header[0].length);
  if (end < 0) return null;
  const body = text.slice(header[0].length, end);
  return /\bstream\b/.test(body) ? null : body;
}

function pageCountOf(catalog: string, pdf: Buffer, offsets: Map<number, number>): number | null {
  const pages = /\/Pages\s+(\d+)\s+(\d+)\s+R/.exec(catalog);
  if (!pages) return null;
  const pagesNum = Number(pages[1]);
  const tree = objectText(pdf, offsets.get(pagesNum), pagesNum, Number(pages[2]));
  if (!tree || !/\/Type\s*\/Pages\b/.test(tree)) return null;
  // The root's /Count is the number of leaf pages in the whole tree (§7.7.3.2). Skip /Kids so a
  // nested dictionary there cannot be mistaken for it.
  const count = /\/Count\s+(\d+)/.exec(tree.replace(/\/Kids\s*\[[^\]]*\]/, ''));
  return count ? Number(count[1]) : null;
}

/**
 * Appends the information dictionary as an update section; returns the new bytes and the page
 * count, or null when the file is not one this reader handles with certainty (see above).
 */
export function appendDocumentInfo(
  bytes: Uint8Array,
  text: DocumentInfoText,
  dates: DocumentInfoDates,
): { pdf: Uint8Array; pageCount: number } | null {
  const pdf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (pdf.subarray(0, 5).toString('latin1') !== '%PDF-') return null;
  const xrefOffset = lastStartXref(pdf);
  if (xrefOffset === null) return null;
  const table = readXrefTable(pdf, xrefOffset);
  if (!table) return null;
  const { root, id } = table.trailer;
  const catalog = objectText(pdf, table.offsets.get(root.num), root.num, root.gen);
  if (!catalog) return null;
  const catalogEnd = catalog.lastIndexOf('>>');
  if (!/^\s*<</.test(catalog) || catalogEnd < 0 || catalog.slice(catalogEnd + 2).trim() !== '') return null;
  // Chromium's tagged output already asks for the title; otherwise the catalog is updated to.
  const showsTitle = /\/ViewerPreferences\s*<<[^>]*\/DisplayDocTitle\s+true\b/.test(catalog);
  if (!showsTitle && /\/ViewerPreferences\b/.test(catalog)) return null;
  const pageCount = pageCountOf(catalog, pdf, table.offsets);
  if (pageCount === null || pageCount < 1) return null;

  const infoNumber = table.trailer.size;
  const entries: string[] = [];
  for (const [key, value] of Object.entries(text)) {
    if (typeof value === 'string') entries.push(`/${key} ${PDFHexString.fromText(value).toString()}`);
  }
  for (const [key, value] of Object.entries(dates)) {
    if (value instanceof Date && !Number.isNaN(value.getTime()))
      entries.push(`/${key} ${PDFString.fromDate(value).toString()}`);
  }
  // A new line first: Chromium's file ends "%%EOF" without one, and the update must start on its own line.
  const separator = pdf[pdf.length - 1] === 0x0a ? '' : '\n';
  const catalogObject = showsTitle
    ? ''
    : `${root.num} ${root.gen} obj\n${catalog.slice(0, catalogEnd).trim()}\n/ViewerPreferences << /DisplayDocTitle true >>\n>>\nendobj\n`;
  const catalogOffset = pdf.length + separator.length;
  const infoOffset = catalogOffset + Buffer.byteLength(catalogObject, 'latin1');
  const infoObject = `${infoNumber} 0 obj\n<<\n${entries.join('\n')}\n>>\nendobj\n`;
  const newXrefOffset = infoOffset + Buffer.byteLength(infoObject, 'latin1');
  const entry = (offset: number, gen: number) =>
    `${String(offset).padStart(10, '0')} ${String(gen).padStart(5, '0')} n `;
  const trailer = [
    'xref',
    '0 1',
    '0000000000 65535 f ',
    ...(catalogObject ? [`${root.num} 1`, entry(catalogOffset, root.gen)] : []),
    `${infoNumber} 1`,
    entry(infoOffset, 0),
    'trailer',
    `<< /Size ${infoNumber + 1} /Root ${root.num} ${root.gen} R /Info ${infoNumber} 0 R /Prev ${xrefOffset}${id ? ` /ID ${id}` : ''} >>`,
    'startxref',
    String(newXrefOffset),
    '%%EOF',
    '',
  ].join('\n');
  const update = Buffer.from(`${separator}${catalogObject}${infoObject}${trailer}`, 'latin1');
  return { pdf: new Uint8Array(Buffer.concat([pdf, update])), pageCount };
}
