import { describe, expect, it } from 'vitest';
import { cellReference, columnIndex, columnLetter } from './cell-reference.ts';

// Column lettering of ECMA-376 (Office Open XML) Part 1 §18.3.1.4: A..Z, AA..; the last column
// of a worksheet, number 16384, is XFD.
describe('cell references', () => {
  it('letters columns A..Z, AA.., up to XFD', () => {
    expect(columnLetter(0)).toBe('A');
    expect(columnLetter(25)).toBe('Z');
    expect(columnLetter(26)).toBe('AA');
    expect(columnLetter(701)).toBe('ZZ');
    expect(columnLetter(702)).toBe('AAA');
    expect(columnLetter(16383)).toBe('XFD');
  });

  it('reads letters back to the index', () => {
    for (const index of [0, 1, 25, 26, 51, 52, 701, 702, 16383])
      expect(columnIndex(columnLetter(index))).toBe(index);
    expect(columnIndex('xfd')).toBe(16383);
  });

  it('refuses what is not a column', () => {
    expect(() => columnLetter(-1)).toThrow(RangeError);
    expect(() => columnIndex('A1')).toThrow(RangeError);
  });

  it('writes sheet-qualified references, quoting names with spaces as spreadsheet formulas do', () => {
    expect(cellReference('Sheet1', 6, 2)).toBe('Sheet1!C7');
    expect(cellReference('Long term', 0, 0)).toBe("'Long term'!A1");
    expect(cellReference("Lot's data", 3, 1)).toBe("'Lot''s data'!B4");
  });
});
