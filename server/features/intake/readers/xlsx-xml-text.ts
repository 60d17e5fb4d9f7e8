/**
 * The few XML text operations the workbook reader needs, written for speed on large sheets.
 *
 * `xmlText` decodes the five predefined entities and numeric character references (XML 1.0,
 * sections 4.1 and 4.6, https://www.w3.org/TR/xml/); any other entity, or markup inside text,
 * means the part is not the plain SpreadsheetML this reader handles, and it throws
 * `ZipUnsupported` so the general reader takes over. `xmlAttributes` reads the attributes of one
 * start tag. `unescapeOoxml` turns the "_x000D_" escapes of SpreadsheetML text (ECMA-376 Part 1,
 * §22.9.2.19 ST_Xstring) into characters, as spreadsheet programs show them.
 *
 * Example: `xmlText('A &amp; B &#x3B1;')` is 'A & B α'; `xmlAttributes(' r="B2" t="s"')` is
 * `{ r: 'B2', t: 's' }`; `unescapeOoxml('a_x000D_b')` is 'a\rb'.
 */
import { ZipUnsupported } from './xlsx-zip-entries.ts';

const NAMED_ENTITIES: Record<string, string> = { lt: '<', gt: '>', amp: '&', quot: '"', apos: "'" };
const ENTITY_PATTERN = /&(#x[0-9a-fA-F]+|#[0-9]+|[A-Za-z]+);/g;
const ATTRIBUTE_PATTERN = /([^\s=]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g;
/** How far into a part its root element is looked for (past the declaration and comments). */
const ROOT_SEARCH_CHARACTERS = 4096;
const OOXML_ESCAPE_PATTERN = /_x([0-9A-F]{4})_/g;

export function xmlText(raw: string): string {
  if (raw.includes('<')) throw new ZipUnsupported('markup inside text');
  if (!raw.includes('&')) return raw;
  return raw.replace(ENTITY_PATTERN, (whole, name: string) => {
    if (name.startsWith('#x')) return String.fromCodePoint(Number.parseInt(name.slice(2), 16));
    if (name.startsWith('#')) return String.fromCodePoint(Number.parseInt(name.slice(1), 10));
    const character = NAMED_ENTITIES[name];
    if (character === undefined) throw new ZipUnsupported(`unknown entity ${whole}`);
    return character;
  });
}

export function xmlAttributes(tagBody: string): Record<string, string> {
  const attributes: Record<string, string> = {};
  ATTRIBUTE_PATTERN.lastIndex = 0;
  for (let match = ATTRIBUTE_PATTERN.exec(tagBody); match; match = ATTRIBUTE_PATTERN.exec(tagBody)) {
    attributes[match[1]!] = xmlText(match[2] ?? match[3] ?? '');
  }
  return attributes;
}

export function unescapeOoxml(text: string): string {
  if (!text.includes('_x')) return text;
  return text.replace(OOXML_ESCAPE_PATTERN, (_, hex: string) =>
    String.fromCharCode(Number.parseInt(hex, 16)),
  );
}

/** A part's text: UTF-8 (the only encoding Excel writes), byte-order mark removed. */
export function xmlPart(bytes: Buffer): string {
  const text = bytes.toString('utf8');
  const declaration = /^\uFEFF?<\?xml[^>]*encoding\s*=\s*["']([^"']+)["']/.exec(text);
  if (declaration && !/^utf-?8$/i.test(declaration[1]!)) throw new ZipUnsupported('not UTF-8');
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** Throws unless the part's first element has no namespace prefix (`<worksheet`, not `<x:worksheet`). */
export function requireUnprefixedRoot(xml: string, rootName: string): void {
  const head = xml.slice(0, ROOT_SEARCH_CHARACTERS).replace(/<\?[\s\S]*?\?>|<!--[\s\S]*?-->/g, '');
  const root = /<([A-Za-z_][\w.:-]*)/.exec(head);
  if (root?.[1] !== rootName) throw new ZipUnsupported(`root element is not <${rootName}>`);
}
