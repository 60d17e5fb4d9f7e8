/**
 * A problem found while reading series out of a sheet, tied to the cell a person has to fix.
 *
 * `text` is the line to show: the cell reference, a colon, and what is wrong
 * (`Sheet1!C7: "n/a" is not a number`). Problems that belong to a sheet or a column rather than
 * one cell carry the sheet prefix only (`Sheet1: the sheet is empty`).
 *
 * Example: `intakeProblem('Sheet1!C7', '"n/a" is not a number').text` is 'Sheet1!C7: "n/a" is not a number'.
 */
export interface IntakeProblem {
  /** Cell reference ("Sheet1!C7") or sheet prefix ("Sheet1"), when the problem has a place. */
  where?: string;
  message: string;
  /** `where: message`, ready to print. */
  text: string;
}

export function intakeProblem(where: string | undefined, message: string): IntakeProblem {
  return where === undefined ? { message, text: message } : { where, message, text: `${where}: ${message}` };
}
