import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { FileReadError } from './file-read-error.ts';
import { detectDelimiter, readCsv } from './read-csv.ts';

const fixtures = path.resolve(import.meta.dirname, '..', '..', '..', '..', 'tests', 'fixtures');

// Format rules: RFC 4180 (CSV, quoting with doubled quotes); the semicolon delimiter with decimal
// commas is what spreadsheet programs write in decimal-comma locales (common practice).
describe('readCsv', () => {
  it('reads a comma-separated file, empty cells as null', () => {
    const [sheet] = readCsv('Time,Assay,Note\n0,100.2,\n3,"98,7","said ""ok"""\n', 'run');
    expect(sheet).toEqual({
      name: 'run',
      rows: [
        ['Time', 'Assay', 'Note'],
        ['0', '100.2', null],
        ['3', '98,7', 'said "ok"'],
      ],
    });
  });

  it('detects semicolons and tabs, ignoring delimiters inside quotes', () => {
    expect(detectDelimiter('a;b;c\n1;2;3')).toBe(';');
    expect(detectDelimiter('"x,y,z";b\n')).toBe(';');
    expect(detectDelimiter('a\tb\n')).toBe('\t');
    expect(detectDelimiter('single\n')).toBe(',');
  });

  it('reads the European export fixture: BOM removed, semicolons, blank line kept as an empty row', () => {
    const [sheet] = readCsv(readFileSync(path.join(fixtures, 'veltrazine-long-term-semicolon.csv')), 'lt');
    expect(sheet?.rows[0]).toEqual(['Charge', 'Lagerung °C', 'Monat', 'Gehalt %']);
    expect(sheet?.rows).toHaveLength(1 + 21 + 1);
    expect(sheet?.rows[7]).toEqual([null]);
    expect(sheet?.rows.slice(1).every((row) => row.length === 4 || row.every((cell) => cell === null))).toBe(
      true,
    );
  });

  it('decodes Windows-1252 bytes when the file is not valid UTF-8, and UTF-16LE with BOM', () => {
    const latin1 = Buffer.from('Temp \xb0C;Wert\n25;99,1\n', 'latin1');
    expect(readCsv(latin1)[0]?.rows[0]).toEqual(['Temp °C', 'Wert']);
    const utf16 = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('t,y\n1,2\n', 'utf16le')]);
    expect(readCsv(utf16)[0]?.rows).toEqual([
      ['t', 'y'],
      ['1', '2'],
    ]);
  });

  it('throws typed errors for an empty file and broken quoting', () => {
    expect(() => readCsv('  \n')).toThrow(FileReadError);
    try {
      readCsv('t,y\n1,"2\n3,4\n');
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(FileReadError);
      expect((error as FileReadError).code).toBe('malformed-csv');
      expect((error as Error).message).toMatch(/quote/);
    }
  });
});
