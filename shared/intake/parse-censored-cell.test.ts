// The notations are common practice in stability tables ("<LOQ", "<QL", "< 0.05"); the decimal
// comma is read as elsewhere in the intake (`parse-number-cell.ts`).
import { describe, expect, it } from 'vitest';
import { parseCensoredCell } from './parse-censored-cell.ts';

describe('parseCensoredCell', () => {
  it('reads a named limit, keeping the text as written and no limit, with value 0', () => {
    for (const text of ['<LOQ', '< LOQ', '<loq', '<LOD', '<QL', '<RT', '<DL', '<RL']) {
      expect(parseCensoredCell(text)).toEqual({ ok: true, censored: { text }, value: 0 });
    }
    expect(parseCensoredCell('  <LOQ ')).toEqual({ ok: true, censored: { text: '<LOQ' }, value: 0 });
  });

  it('reads a stated limit with a decimal point or comma; the value is the limit', () => {
    expect(parseCensoredCell('< 0.05')).toEqual({
      ok: true,
      censored: { limit: 0.05, text: '< 0.05' },
      value: 0.05,
    });
    expect(parseCensoredCell('<0,05')).toEqual({
      ok: true,
      censored: { limit: 0.05, text: '<0,05' },
      value: 0.05,
    });
    expect(parseCensoredCell('<1e-2')).toMatchObject({ ok: true, value: 0.01 });
    expect(parseCensoredCell('<.1')).toMatchObject({ ok: true, value: 0.1 });
  });

  it('writes the censored keys in sorted order (limit before text) for the canonical JSON', () => {
    const result = parseCensoredCell('< 0.05');
    expect(result?.ok && Object.keys(result.censored)).toEqual(['limit', 'text']);
  });

  it('leaves numbers, other text and non-text cells to the number reader', () => {
    for (const cell of [0.05, '0.05', 'n/a', '>100', 'LOQ', null, true, new Date(0)]) {
      expect(parseCensoredCell(cell)).toBeNull();
    }
  });

  it('refuses "<" without a limit, a limit that is not positive, "<=" or "≤", and other text', () => {
    expect(parseCensoredCell('<')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^"<" names no limit/),
    });
    expect(parseCensoredCell('< ')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^"<" names no limit/),
    });
    expect(parseCensoredCell('<abc')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^"<abc" is not a number or a limit: write a limit as "<LOQ"/),
    });
    expect(parseCensoredCell('< -1')).toMatchObject({
      ok: false,
      reason: '"< -1": a reporting or quantitation limit is above zero; check the cell',
    });
    expect(parseCensoredCell('<0')).toMatchObject({ ok: false, reason: expect.stringMatching(/above zero/) });
    expect(parseCensoredCell('<= 0.05')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^"<= 0.05" says at or below a limit/),
    });
    expect(parseCensoredCell('≤0.05')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/at or below/),
    });
    expect(parseCensoredCell('<0.05 %')).toMatchObject({ ok: false });
    expect(parseCensoredCell('<1e999')).toMatchObject({ ok: false, reason: expect.stringMatching(/finite/) });
  });
});
