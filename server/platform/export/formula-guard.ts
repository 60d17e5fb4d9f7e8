/**
 * The one formula-injection guard for text written to a file a spreadsheet opens (every CSV and
 * workbook export uses it, through `csv-writer.ts` and `workbook-writer.ts`).
 *
 * Why: a spreadsheet program reads a CSV cell that begins with `=`, `+`, `-` or `@` as a formula,
 * and some read a leading tab (0x09) or carriage return (0x0D) the same way. Text that came from
 * outside — a batch name or a note typed into the uploaded workbook, an actor label typed at the
 * sign-in form — could then run `=HYPERLINK("http://…")` or worse on the reader's machine
 * (OWASP, "CSV Injection", https://owasp.org/www-community/attacks/CSV_Injection).
 *
 * Rule in words: a text cell whose first character is one of those six gets a single apostrophe
 * in front; every other text is left exactly as it is. Spreadsheets show `'=1+1` as text. Only
 * text is guarded: a number written from a JavaScript number (−0.0123) is a number cell and is
 * never touched, which is why callers pass numbers as numbers, not as strings.
 *
 * Reading back: a program that re-reads the file removes that one apostrophe from a cell where it
 * precedes one of the six characters. That is exact for every text except one that itself began
 * with an apostrophe and one of the six (`'=1`): it is written unchanged, as it is not a formula,
 * and so reads back as `=1`.
 *
 * Throws nothing. Examples: `guardFormulaText('=1+1')` is `'=1+1`; `guardFormulaText('-5 %')` is
 * `'-5 %`; `guardFormulaText('Batch A')` is `Batch A`.
 */

/** The characters OWASP names as starting a formula (`=`, `+`, `-`, `@`, tab, carriage return). */
export const FORMULA_TRIGGER_CHARACTERS: readonly string[] = ['=', '+', '-', '@', '\t', '\r'];

const FORMULA_START = /^[=+\-@\t\r]/;

/** True when a spreadsheet could read this text as the start of a formula. */
export function startsLikeFormula(text: string): boolean {
  return FORMULA_START.test(text);
}

/** The text as it is written to an export: with a leading apostrophe when it starts like a formula. */
export function guardFormulaText(text: string): string {
  return startsLikeFormula(text) ? `'${text}` : text;
}
