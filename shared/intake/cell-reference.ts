/**
 * Spreadsheet cell references ("Sheet1!C7") for messages a person can act on.
 *
 * Columns are lettered A..Z, AA..AZ, BA.. (bijective base 26, as every spreadsheet program does);
 * rows are numbered from 1. Sheet names with anything but letters, digits and underscores are
 * quoted ('Stability data'!B4), with inner quotes doubled, as spreadsheet formulas write them.
 *
 * Throws `RangeError` for a negative or non-integer column index, or a malformed letter string.
 *
 * Example: `columnLetter(0)` is 'A', `columnLetter(27)` is 'AB', `columnIndex('AB')` is 27,
 * `cellReference('Sheet1', 6, 2)` is 'Sheet1!C7'.
 */

/** Letters of a 0-based column index: 0 → A, 25 → Z, 26 → AA. */
export function columnLetter(index: number): string {
  if (!Number.isInteger(index) || index < 0) throw new RangeError(`Column index ${index} is not valid.`);
  let letters = '';
  let remaining = index + 1;
  while (remaining > 0) {
    const digit = (remaining - 1) % 26;
    letters = String.fromCharCode(65 + digit) + letters;
    remaining = Math.floor((remaining - 1) / 26);
  }
  return letters;
}

/** 0-based column index of column letters (case-insensitive): A → 0, AA → 26. */
export function columnIndex(letters: string): number {
  const text = letters.trim().toUpperCase();
  if (!/^[A-Z]{1,3}$/.test(text)) throw new RangeError(`"${letters}" is not a column letter.`);
  let index = 0;
  for (const character of text) index = index * 26 + (character.charCodeAt(0) - 64);
  return index - 1;
}

/** The sheet-name prefix of a reference, quoted when needed. */
export function sheetPrefix(sheetName: string): string {
  return /^[A-Za-z_][A-Za-z0-9_]*$/.test(sheetName) ? sheetName : `'${sheetName.replaceAll("'", "''")}'`;
}

/** Reference of a cell from its 0-based row and column: ('Sheet1', 6, 2) → 'Sheet1!C7'. */
export function cellReference(sheetName: string, rowIndex: number, column: number): string {
  return `${sheetPrefix(sheetName)}!${columnLetter(column)}${rowIndex + 1}`;
}
