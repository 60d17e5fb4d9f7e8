import { describe, expect, it } from 'vitest';
import { FORMULA_TRIGGER_CHARACTERS, guardFormulaText, startsLikeFormula } from './formula-guard.ts';

// The characters are those of OWASP, "CSV Injection"
// (https://owasp.org/www-community/attacks/CSV_Injection): = + - @, tab (0x09), carriage return (0x0D).
describe('guardFormulaText (OWASP "CSV Injection")', () => {
  it('names exactly the six characters OWASP lists', () => {
    expect([...FORMULA_TRIGGER_CHARACTERS].sort()).toEqual(['\t', '\r', '+', '-', '=', '@'].sort());
  });

  it.each([
    ['=', '=HYPERLINK("http://example.invalid","x")'],
    ['+', '+1+1'],
    ['-', '-2+3'],
    ['@', '@SUM(A1)'],
    ['tab', '\t=1+1'],
    ['carriage return', '\r=1+1'],
  ])('prefixes one apostrophe to text starting with %s', (_name, text) => {
    expect(startsLikeFormula(text)).toBe(true);
    expect(guardFormulaText(text)).toBe(`'${text}`);
  });

  it('guards every listed character, and only at the start', () => {
    for (const character of FORMULA_TRIGGER_CHARACTERS) {
      expect(guardFormulaText(`${character}x`)).toBe(`'${character}x`);
      expect(guardFormulaText(`x${character}`)).toBe(`x${character}`);
    }
  });

  it('guards text that merely looks like a negative number ("-5 %" is text, not a number)', () => {
    expect(guardFormulaText('-5 %')).toBe("'-5 %");
    expect(guardFormulaText('-0.0123')).toBe("'-0.0123");
  });

  it('leaves other text alone, including empty text, a leading space, newline or apostrophe', () => {
    for (const text of ['', 'Batch A', ' =1', '\n=1', "'quoted", '5 %', '（=1）', '°C'])
      expect(guardFormulaText(text)).toBe(text);
  });

  it('is undone by removing one apostrophe where it precedes a listed character', () => {
    const unguard = (text: string) => (/^'[=+\-@\t\r]/.test(text) ? text.slice(1) : text);
    for (const text of ['=1', '+1', '-5', '@A1', '\t1', '\r1', 'plain', "'plain"])
      expect(unguard(guardFormulaText(text))).toBe(text);
    // The one text the rule cannot tell apart: it is inert already, so it is written unchanged.
    expect(guardFormulaText("'=1")).toBe("'=1");
  });
});
