/**
 * Finds the column a mapping names, by header text or by letter, allowing for merged headers.
 *
 * The header of a column is the text in the header row; when that cell is blank but lies in a
 * merged block that starts in this column (a header written once over several header rows), the
 * block's text counts. A header merged across several columns names only its first column, which
 * is where a spreadsheet stores it. Header text is matched without regard to case, surrounding
 * spaces or repeated inner spaces. When no header matches and the name is one to three letters,
 * it is read as a column letter. When a name matches two headers that differ only in case, the one
 * written exactly so wins; otherwise a name that matches two headers is refused, so the analyst
 * picks one by letter instead of the program guessing. A name without a unit also matches a header
 * that adds one in brackets ("Assay" names "Assay (% label claim)") when exactly one header does.
 *
 * Never throws; returns `{ ok: false, message }` for the caller to report.
 *
 * Example: in a sheet with headers ['Time', 'Assay'], `resolveColumn(sheet, 1, 'assay')` is
 * `{ ok: true, index: 1 }` and `resolveColumn(sheet, 1, 'C')` is `{ ok: true, index: 2 }`.
 */
import { columnIndex, columnLetter } from './cell-reference.ts';
import { type GridCell, isBlankCell, type SheetGrid } from './sheet-grid.ts';

export type ResolvedColumn = { ok: true; index: number } | { ok: false; message: string };

/** Text of a cell as a header or a label; blank for empty cells and uncomputed formulas. */
export function cellText(cell: GridCell | undefined): string {
  if (isBlankCell(cell) || cell === undefined || cell === null) return '';
  if (cell instanceof Date)
    return cell
      .toISOString()
      .replace(/T00:00:00\.000Z$/, '')
      .replace(/\.000Z$/, 'Z');
  if (typeof cell === 'object') return '';
  if (typeof cell === 'boolean') return cell ? 'TRUE' : 'FALSE';
  return String(cell).trim();
}

/** A header without its trailing unit in brackets: "Time (h)" → "Time". */
function stripUnit(header: string): string {
  return header.replace(/\s*[([][^()[\]]*[)\]]\s*$/, '');
}

function normalise(text: string): string {
  return text.trim().replace(/\s+/g, ' ').toLowerCase();
}

/** Header texts of a sheet's header row (1-based row; 0 = none), one per column. */
export function headerTexts(sheet: SheetGrid, headerRow: number): string[] {
  if (headerRow < 1) return [];
  const rowIndex = headerRow - 1;
  const row = sheet.rows[rowIndex] ?? [];
  const width = sheet.rows.reduce((widest, cells) => Math.max(widest, cells.length), 0);
  const texts: string[] = [];
  for (let column = 0; column < width; column += 1) {
    let text = cellText(row[column]);
    if (text === '') {
      const merge = sheet.merges?.find(
        (range) => range.left === column && range.top <= rowIndex && rowIndex <= range.bottom,
      );
      if (merge) text = cellText(sheet.rows[merge.top]?.[merge.left]);
    }
    texts.push(text);
  }
  return texts;
}

export function resolveColumn(sheet: SheetGrid, headerRow: number, name: string): ResolvedColumn {
  const headers = headerTexts(sheet, headerRow);
  const wanted = normalise(name);
  let matches = headers.flatMap((header, index) => (normalise(header) === wanted ? [index] : []));
  if (matches.length > 1) {
    const sameCase = matches.filter(
      (index) => headers[index]?.replace(/\s+/g, ' ') === name.trim().replace(/\s+/g, ' '),
    );
    if (sameCase.length === 1) matches = sameCase;
  }
  if (matches.length === 1 && matches[0] !== undefined) return { ok: true, index: matches[0] };
  if (matches.length > 1) {
    const letters = matches.map((index) => columnLetter(index)).join(' and ');
    return {
      ok: false,
      message: `the header "${name}" appears in columns ${letters}; name the column by its letter`,
    };
  }
  // "Assay" also names a column headed "Assay (% label claim)": the unit in brackets is optional.
  const withoutUnit = headers.flatMap((header, index) =>
    normalise(stripUnit(header)) === wanted ? [index] : [],
  );
  if (withoutUnit.length === 1 && withoutUnit[0] !== undefined) return { ok: true, index: withoutUnit[0] };
  if (/^[A-Za-z]{1,3}$/.test(name.trim())) return { ok: true, index: columnIndex(name) };
  const known = headers.filter((header) => header !== '');
  const listed = known.length > 0 ? ` (headers: ${known.join(', ')})` : '';
  const place =
    headerRow >= 1 ? `in header row ${headerRow}` : 'because the mapping says there is no header row';
  return { ok: false, message: `no column headed "${name}" ${place}${listed}` };
}
