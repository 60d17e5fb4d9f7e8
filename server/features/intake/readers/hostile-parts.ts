/**
 * Refuses workbooks that carry more than data: macros, DTD or entity declarations, and
 * references to content outside the file. None of them is needed for stability results, each is a
 * way to attack whoever opens the stored original later (a reviewer downloading it, an inspector),
 * and the intake keeps originals for years, so such a file is refused before anything is stored.
 *
 * What counts, by the parts of the package (ECMA-376 Part 2, Open Packaging Conventions: part
 * names, `[Content_Types].xml`, relationship parts with `TargetMode="External"`; the macro part
 * names and content types are Microsoft's, [MS-OFFMACRO2] and [MS-XLSB]/[MS-OI29500], from memory):
 * - macros: a part named `vbaProject.bin` (VBA), Excel 4 macro sheets (`xl/macrosheets/`),
 *   ActiveX controls (`xl/activeX/`), or any content type naming them (`…macroEnabled…`,
 *   `…vbaProject…`, `…macrosheet…`, `…activeX…`);
 * - declarations: `<!DOCTYPE` or `<!ENTITY` anywhere in any part (UTF-8 or UTF-16), the root of
 *   "billion laughs" and external-entity attacks (OWASP, "XML External Entity Prevention Cheat
 *   Sheet"); spreadsheet programs never write them (common practice);
 * - external references: links to other workbooks (`xl/externalLinks/`), data connections
 *   (`xl/connections.xml`), and any relationship whose `TargetMode` is `External` (a linked
 *   picture, an OLE link, an attached template: a spreadsheet program fetches them when the file
 *   is opened), except a cell hyperlink to a web or mail address. Such a hyperlink fetches
 *   nothing until someone clicks it, spreadsheet programs ask before following it, the reader
 *   reads it as its text, and lab workbooks carry them (a link to the SOP). A hyperlink to
 *   anything else (`file:`, a network share, which leaks the reader's credentials when followed)
 *   is refused.
 *
 * Throws `FileReadError` ('macro-content', 'xml-declaration' or 'external-reference') naming the
 * part; the ZIP reader's own errors (`ZipDamaged`, `ZipTooLarge`) pass through for the caller.
 *
 * Example: an .xlsm saved by Excel holds `xl/vbaProject.bin`, so `assertNoHostileParts(bytes)`
 * throws "The workbook contains macros (the part "xl/vbaProject.bin") …".
 */
import { FileReadError } from './file-read-error.ts';
import { ZipUnsupported, zipEntries } from './xlsx-zip-entries.ts';

const MACRO_PART = /(^|\/)vbaproject\.bin$|^xl\/macrosheets\/|^xl\/activex\//i;
const MACRO_CONTENT_TYPE = /macroenabled|vbaproject|macrosheet|activex/i;
const EXTERNAL_PART = /^xl\/externallinks\/|^xl\/connections\.xml$/i;
const CONTENT_TYPE_ENTRY = /<(?:Override|Default)\b[^>]*>/g;
const RELATIONSHIP = /<Relationship\b[^>]*>/g;
const EXTERNAL_MODE = /\bTargetMode\s*=\s*["']External["']/i;
const HYPERLINK_TYPE = /\/relationships\/hyperlink$/;
const WEB_ADDRESS = /^(https?:\/\/|mailto:)/i;
const DECLARATIONS = ['<!DOCTYPE', '<!ENTITY'].flatMap((text) => [
  Buffer.from(text, 'utf8'),
  Buffer.from(text, 'utf16le'),
  Buffer.from(text, 'utf16le').swap16(),
]);
const LONGEST_TARGET_SHOWN = 80;

function macroError(part: string): FileReadError {
  return new FileReadError(
    'macro-content',
    `The workbook contains macros or controls that can run code (the part "${part}"). Rateledger does not keep files that can run code: save a copy as "Excel Workbook (.xlsx)", which leaves the macros out, and upload that.`,
  );
}

function externalError(part: string, target?: string): FileReadError {
  const shown =
    target === undefined
      ? ''
      : `, which points to "${target.length > LONGEST_TARGET_SHOWN ? `${target.slice(0, LONGEST_TARGET_SHOWN)}…` : target}"`;
  return new FileReadError(
    'external-reference',
    `The workbook refers to content outside the file (the part "${part}"${shown}). Rateledger keeps only self-contained files: break links to other workbooks (Data › Edit Links › Break Link), remove data connections and hyperlinks to addresses, save, and upload again.`,
  );
}

function declarationError(part: string): FileReadError {
  return new FileReadError(
    'xml-declaration',
    `The workbook's part "${part}" declares a document type or entities (<!DOCTYPE or <!ENTITY), which spreadsheet programs never write and which are used to attack the programs that read a file. Open the file in a spreadsheet program, save it as a new .xlsx and upload that.`,
  );
}

/** The attribute `name` of one start tag, or undefined. */
function attribute(tag: string, name: string): string | undefined {
  return new RegExp(`\\b${name}\\s*=\\s*(?:"([^"]*)"|'([^']*)')`).exec(tag)?.slice(1).find(Boolean);
}

/** A part's bytes, or undefined for an entry this reader cannot unpack (left to the general reader, which refuses it). */
function readPart(zip: ReturnType<typeof zipEntries>, name: string): Buffer | undefined {
  try {
    return zip.read(name);
  } catch (error) {
    if (error instanceof ZipUnsupported && error.name === 'ZipUnsupported') return undefined;
    throw error;
  }
}

export function assertNoHostileParts(content: Uint8Array): void {
  const zip = zipEntries(content);
  for (const name of zip.names) {
    if (MACRO_PART.test(name)) throw macroError(name);
    if (EXTERNAL_PART.test(name)) throw externalError(name);
  }
  for (const name of zip.names) {
    const bytes = readPart(zip, name);
    if (!bytes) continue;
    if (DECLARATIONS.some((declaration) => bytes.includes(declaration))) throw declarationError(name);
    if (name === '[Content_Types].xml') {
      for (const [tag] of bytes.toString('utf8').matchAll(CONTENT_TYPE_ENTRY)) {
        if (MACRO_CONTENT_TYPE.test(attribute(tag, 'ContentType') ?? ''))
          throw macroError(attribute(tag, 'PartName')?.replace(/^\//, '') ?? `${name} (${tag})`);
      }
    }
    if (/\.rels$/i.test(name)) {
      for (const [tag] of bytes.toString('utf8').matchAll(RELATIONSHIP)) {
        if (!EXTERNAL_MODE.test(tag)) continue;
        const target = attribute(tag, 'Target') ?? '';
        if (!(HYPERLINK_TYPE.test(attribute(tag, 'Type') ?? '') && WEB_ADDRESS.test(target)))
          throw externalError(name, target);
      }
    }
  }
}
