import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { csvRecords, csvTable } from './csv-writer.ts';
import type { ExportColumn } from './export-columns.ts';

// Format rules from RFC 4180 (https://www.rfc-editor.org/rfc/rfc4180), section 2; formula rules
// from OWASP, "CSV Injection" (https://owasp.org/www-community/attacks/CSV_Injection).
describe('csvRecords: RFC 4180', () => {
  it('ends every record with CRLF, the last one included (RFC 4180 §2.1–2.2)', () => {
    expect(
      csvRecords([
        ['a', 'b'],
        ['c', 'd'],
      ]),
    ).toBe('a,b\r\nc,d\r\n');
    expect(csvRecords([])).toBe('');
  });

  it('quotes a field holding a comma, a double quote, CRLF, a lone LF or a lone CR, and doubles inner quotes (§2.6–2.7)', () => {
    expect(csvRecords([['a,b', 'say "hi"', 'one\r\ntwo', 'one\ntwo', 'one\rtwo']])).toBe(
      '"a,b","say ""hi""","one\r\ntwo","one\ntwo","one\rtwo"\r\n',
    );
  });

  it('quotes nothing else: spaces, apostrophes and non-ASCII stay bare (§2.5: quoting is optional)', () => {
    expect(csvRecords([[' padded ', "it's", '25 °C', '']])).toBe(" padded ,it's,25 °C,\r\n");
  });

  it('writes null and undefined as empty fields', () => {
    expect(csvRecords([[null, 'x', undefined]])).toBe(',x,\r\n');
  });

  it('parses back to the same text with a standard reader (csv-parse)', () => {
    const cells = ['plain', 'a,b', 'say "hi"', 'one\ntwo', 'one\r\ntwo', '', '25 °C'];
    expect(parse(csvRecords([cells]), { relax_quotes: false })).toEqual([cells]);
  });
});

describe('csvRecords: byte-order mark', () => {
  it('starts with U+FEFF (UTF-8 EF BB BF) only when asked', () => {
    const withMark = csvRecords([['°C']], { byteOrderMark: true });
    expect(withMark).toBe('\ufeff°C\r\n');
    expect([...Buffer.from(withMark, 'utf8').subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    expect(csvRecords([['°C']])).toBe('°C\r\n');
    expect(csvRecords([['°C']], { byteOrderMark: false }).charCodeAt(0)).not.toBe(0xfeff);
  });
});

describe('csvRecords: formula guard (OWASP "CSV Injection")', () => {
  it.each([
    ['=', '=HYPERLINK("http://example.invalid","x")', `"'=HYPERLINK(""http://example.invalid"",""x"")"`],
    ['+', '+1+1', "'+1+1"],
    ['-', '-2+3', "'-2+3"],
    ['@', '@SUM(A1)', "'@SUM(A1)"],
    ['tab', '\tcmd', "'\tcmd"],
    ['carriage return', '\rcmd', `"'\rcmd"`],
  ])('text starting with %s gets one apostrophe, then RFC 4180 quoting', (_name, text, field) => {
    expect(csvRecords([[text]])).toBe(`${field}\r\n`);
  });

  it('"-5 %" is text and is guarded', () => {
    expect(csvRecords([['-5 %']])).toBe("'-5 %\r\n");
  });

  it('numbers stay numbers: a negative estimate is written as JavaScript prints it, never guarded', () => {
    expect(csvRecords([[-0.0123, -5, 6.213e-4, -1e-12, 0]])).toBe('-0.0123,-5,0.0006213,-1e-12,0\r\n');
    const parsed = parse(csvRecords([[-0.0123]])) as string[][];
    expect(Number(parsed[0]?.[0])).toBe(-0.0123);
  });

  it('the same characters further in are left alone', () => {
    expect(csvRecords([['a=b', 'x-1', 'mail@example.invalid']])).toBe('a=b,x-1,mail@example.invalid\r\n');
  });
});

describe('csvTable', () => {
  interface Row {
    name: string;
    estimate: number | null;
  }
  const columns: ExportColumn<Row>[] = [
    { key: 'name', header: 'Name', type: 'text', value: (row) => row.name },
    { header: 'Estimate', unit: '1/month', type: 'number', value: (row) => row.estimate },
  ];

  it('names columns by key, else by heading with unit, then writes one record per row', () => {
    const rows: Row[] = [
      { name: '=cmd', estimate: -0.0123 },
      { name: 'B2', estimate: null },
    ];
    expect(csvTable(columns, rows, { byteOrderMark: true })).toBe(
      "\ufeffname,Estimate (1/month)\r\n'=cmd,-0.0123\r\nB2,\r\n",
    );
  });
});
