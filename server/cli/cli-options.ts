/**
 * What the command-line tools (`fit`, `mkt`) read their options with: negative numbers kept as
 * option values, and numbers read like a spreadsheet cell (a decimal comma accepted).
 *
 * Example: `withNegativeNumbersAttached(['--range-min', '-5'])` is `['--range-min=-5']`;
 * `numberOption('range-max', '25,0')` is 25.
 */
import { parseNumberCell } from '../../shared/intake/parse-number-cell.ts';
import { KineticsError } from '../../shared/kinetics/numeric/kinetics-error.ts';

/** A negative number written as an option's value ("-5", "-0,5", "-1e-3"), not an option. */
const NEGATIVE_NUMBER = /^-\s*(?:\d|[.,]\d)/;

/**
 * node:util `parseArgs` reads "--lower-limit -5" as an option "-5" and refuses it; a limit or
 * temperature may well be negative, so such a value is attached to its option ("--lower-limit=-5") first.
 */
export function withNegativeNumbersAttached(argv: readonly string[]): string[] {
  const args: string[] = [];
  for (let index = 0; index < argv.length; index++) {
    const arg = argv[index] as string;
    const next = argv[index + 1];
    if (/^--[^=]+$/.test(arg) && next !== undefined && NEGATIVE_NUMBER.test(next)) {
      args.push(`${arg}=${next}`);
      index++;
    } else args.push(arg);
  }
  return args;
}

/** The number an option gives, or undefined when left out; throws naming the option otherwise. */
export function numberOption(name: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const parsed = parseNumberCell(text);
  if (!parsed.ok) throw new KineticsError('invalid-input', `--${name}: "${text}" is not a number.`);
  return parsed.value;
}
