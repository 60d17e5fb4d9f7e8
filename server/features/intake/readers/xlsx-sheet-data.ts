/**
 * The rows of one worksheet part's `<sheetData>`, as plain cells: the hot loop of the fast
 * workbook reader, which meets every cell of a 100,000-row sheet.
 *
 * It walks the XML with `indexOf` rather than a general parser: `<row r="n">` starts row n (or
 * the next row when `r` is missing), `<c r="B7" s="3" t="s">…</c>` is one cell (or the next
 * column when `r` is missing), and only the cell's `<f>`, `<v>` and `<is>` children are read —
 * ECMA-376 Part 1, §18.3.1.73 (row), §18.3.1.4 (c), §18.3.1.40 (f), §18.3.1.96 (v), §18.3.1.53 (is),
 * with the cell types of §18.18.11 (b, d, e, inlineStr, n, s, str). Missing rows are empty rows,
 * missing cells are null, trailing nulls are dropped later with the merges applied.
 *
 * Throws `ZipUnsupported` for markup it does not expect (comments, prefixed names, a cell outside
 * a row, a shared string that is not in the table), for the general reader to take over.
 *
 * Example: `<sheetData><row r="2"><c r="B2"><v>98.7</v></c></row></sheetData>` gives rows
 * `[[], [null, 98.7]]`.
 */
import type { GridCell } from '../../../../shared/intake/sheet-grid.ts';
import { unescapeOoxml, xmlAttributes, xmlText } from './xlsx-xml-text.ts';
import { ZipUnsupported } from './xlsx-zip-entries.ts';

export interface SheetContext {
  strings: (string | null)[] | undefined;
  dateStyles: boolean[];
  date1904: boolean;
}

const SLASH = 47;
const UPPER_A = 65;
const UPPER_Z = 90;
/** Days from the 1900 system's day 0 to 1970-01-01, and from the 1900 to the 1904 system. */
const UNIX_EPOCH_SERIAL = 25569;
const DATE_1904_OFFSET_DAYS = 1462;

/** A date from a serial day number, computed exactly as the general reader computes it. */
function excelDate(serial: number, date1904: boolean): Date {
  return new Date(
    Math.round((serial - UNIX_EPOCH_SERIAL + (date1904 ? DATE_1904_OFFSET_DAYS : 0)) * 24 * 3600 * 1000),
  );
}

/** The five entity names decoded once more, as the general reader does for string results. */
function decodeAgain(text: string): string {
  if (!text.includes('&')) return text;
  const names: Record<string, string> = {
    '&lt;': '<',
    '&gt;': '>',
    '&amp;': '&',
    '&apos;': "'",
    '&quot;': '"',
  };
  return text.replace(/&([a-z]*);/g, (entity) => names[entity] ?? entity);
}

/** 0-based column of a cell reference such as "AB12". */
function columnOf(reference: string): number {
  let column = 0;
  let letters = 0;
  for (let index = 0; index < reference.length; index += 1) {
    const code = reference.charCodeAt(index) & ~32;
    if (code < UPPER_A || code > UPPER_Z) break;
    column = column * 26 + code - 64;
    letters += 1;
  }
  if (letters === 0 || letters > 3) throw new ZipUnsupported(`cell reference ${reference}`);
  return column - 1;
}

/** The value of attribute `name` in a start tag's body, when written with double quotes. */
function attribute(body: string, name: string): string | undefined {
  const at = body.indexOf(` ${name}="`);
  if (at < 0) return body.includes(`${name}=`) ? xmlAttributes(body)[name] : undefined;
  const start = at + name.length + 3;
  return body.slice(start, body.indexOf('"', start));
}

interface Formula {
  text: string;
  attributes: Record<string, string>;
}

function cellValue(
  content: string,
  type: string | undefined,
  styled: boolean,
  reference: string | undefined,
  context: SheetContext,
  sharedFormulas: Map<string, string | undefined>,
): GridCell {
  let value: string | undefined;
  let formula: Formula | undefined;
  let rich = false;
  if (content.startsWith('<v>') && content.indexOf('<', 3) === content.length - 4) {
    value = xmlText(content.slice(3, -4));
  } else {
    const f = /<f\b([^>]*?)(?:\/>|>([\s\S]*?)<\/f>)/.exec(content);
    if (f) formula = { text: xmlText(f[2] ?? ''), attributes: xmlAttributes(f[1]!) };
    const v = /<v\b[^>]*?(?:\/>|>([\s\S]*?)<\/v>)/.exec(content);
    if (v?.[1]) value = xmlText(v[1]);
    const inline = /<is\b[^>]*>([\s\S]*?)<\/is>/.exec(content);
    if (inline && value === undefined) {
      rich = /<r\b/.test(inline[1]!);
      const texts = [...inline[1]!.matchAll(/<t\b[^>]*?(?:\/>|>([\s\S]*?)<\/t>)/g)].map((t) =>
        xmlText(t[1] ?? ''),
      );
      const text = texts.join('');
      if (text !== '') value = rich ? unescapeOoxml(text) : text;
    }
  }
  if (formula && (formula.text !== '' || formula.attributes.t !== undefined)) {
    let result: GridCell | { error: string } | undefined;
    if (value) {
      if (type === 'str') result = decodeAgain(value);
      else if (type === 'b') result = Number.parseInt(value, 10) !== 0;
      else if (type === 'e') result = value;
      else result = Number.parseFloat(value);
      // As the general reader does: a result in a date-formatted cell becomes a date (an invalid
      // one when the result is not a number).
      if (styled) result = excelDate(type === 'e' ? Number.NaN : Number(result), context.date1904);
    }
    let shared: string | undefined;
    let sharesAnother = false;
    if (formula.attributes.t === 'shared') {
      const group = formula.attributes.si ?? '';
      if (formula.attributes.ref) sharedFormulas.set(group, reference);
      else {
        shared = sharedFormulas.get(group);
        sharesAnother = true;
      }
    }
    if (result === undefined) return { formulaWithoutValue: sharesAnother ? (shared ?? '') : formula.text };
    return result as GridCell;
  }
  if (value === undefined || value === '') return null;
  switch (type) {
    case 's': {
      const index = Number.parseInt(value, 10);
      const text = context.strings?.[index];
      if (text === undefined) throw new ZipUnsupported(`shared string ${value} is not in the table`);
      return text;
    }
    case 'str':
      return decodeAgain(value);
    case 'inlineStr':
      return value;
    case 'b':
      return Number.parseInt(value, 10) !== 0;
    case 'e':
      return value;
    case 'd': {
      const date = new Date(/[zZ]|[+-]\d\d:?\d\d$/.test(value) ? value : `${value}Z`);
      if (Number.isNaN(date.getTime())) throw new ZipUnsupported(`date ${value}`);
      return date;
    }
    default: {
      const number = Number.parseFloat(value);
      return styled ? excelDate(number, context.date1904) : number;
    }
  }
}

/** Rows of the part's sheetData, and where sheetData ends (merges follow it). */
export function readSheetData(xml: string, context: SheetContext): { rows: GridCell[][]; dataEnd: number } {
  const rows: GridCell[][] = [];
  const open = xml.indexOf('<sheetData');
  if (open < 0) return { rows, dataEnd: 0 };
  const openEnd = xml.indexOf('>', open);
  if (xml.charCodeAt(openEnd - 1) === SLASH) return { rows, dataEnd: openEnd + 1 };
  const end = xml.indexOf('</sheetData>', openEnd);
  if (openEnd < 0 || end < 0) throw new ZipUnsupported('sheetData not closed');
  const sharedFormulas = new Map<string, string | undefined>();
  let cells: GridCell[] | null = null;
  let rowNumber = 0;
  let column = -1;
  let position = openEnd + 1;
  for (;;) {
    const start = xml.indexOf('<', position);
    if (start < 0 || start >= end) break;
    const close = xml.indexOf('>', start);
    const next = xml.charCodeAt(start + 1);
    const nameEnd = xml.charCodeAt(start + 2);
    if (next === 99 && (nameEnd === 32 || nameEnd === 62 || nameEnd === SLASH || nameEnd < 32)) {
      // <c …> or <c …/>
      if (cells === null) throw new ZipUnsupported('cell outside a row');
      const selfClosing = xml.charCodeAt(close - 1) === SLASH;
      const body = xml.slice(start + 2, selfClosing ? close - 1 : close);
      const reference = attribute(body, 'r');
      column = reference === undefined ? column + 1 : columnOf(reference);
      let cell: GridCell = null;
      if (selfClosing) position = close + 1;
      else {
        const contentEnd = xml.indexOf('</c>', close);
        if (contentEnd < 0 || contentEnd > end) throw new ZipUnsupported('cell not closed');
        const style = Number.parseInt(attribute(body, 's') ?? '', 10);
        const styled = style > 0 && context.dateStyles[style] === true;
        const content = xml.slice(close + 1, contentEnd);
        cell = cellValue(content, attribute(body, 't'), styled, reference, context, sharedFormulas);
        position = contentEnd + 4;
      }
      while (cells.length < column) cells.push(null);
      cells[column] = cell;
    } else if (next === 114 && xml.startsWith('row', start + 1)) {
      const selfClosing = xml.charCodeAt(close - 1) === SLASH;
      const number = attribute(xml.slice(start + 4, selfClosing ? close - 1 : close), 'r');
      rowNumber = number === undefined ? rowNumber + 1 : Number.parseInt(number, 10);
      if (!(rowNumber >= 1) || rowNumber > 1_048_576) throw new ZipUnsupported(`row number ${number}`);
      while (rows.length < rowNumber) rows.push([]);
      cells = selfClosing ? null : rows[rowNumber - 1]!;
      column = -1;
      position = close + 1;
    } else if (next === SLASH && xml.startsWith('/row>', start + 1)) {
      cells = null;
      position = close + 1;
    } else if (next === SLASH || (next >= 97 && next <= 122) || (next >= UPPER_A && next <= UPPER_Z)) {
      if (xml.slice(start + 1, close).includes(':') && !xml.slice(start + 1, close).startsWith('/'))
        throw new ZipUnsupported('prefixed element in sheetData');
      position = close + 1; // extLst and other elements the intake does not read
    } else throw new ZipUnsupported('unexpected markup in sheetData');
  }
  return { rows, dataEnd: end };
}
