/**
 * Writes a number for people to read: rounded to a number of significant figures, in plain
 * decimal notation for ordinary magnitudes and as "6.21 × 10⁻⁴" for very small or very large
 * ones, with a true minus sign (U+2212). Every number on the analysis screen, in the export's
 * text cells and (later) in the PDF report goes through this one function, so a value reads the
 * same everywhere it appears.
 *
 * Why significant figures and not fixed decimals: rate constants span many decades (10⁻⁶ 1/s to
 * 10 1/month); a fixed number of decimals would show 0.0000 for one and noise for the other.
 * Trailing zeros are kept (100.0 with 4 figures), because they say how precisely a value is known.
 *
 * Formula in words: the decimal exponent e = floor(log10 |x|) after rounding to `digits`
 * figures; plain notation when `PLAIN_MIN_EXPONENT` ≤ e < `PLAIN_MAX_EXPONENT`, scientific
 * notation otherwise. Reference: NIST SP 811 (2008) §7.9 and §10.5, "Guide for the Use of the
 * International System of Units" (rounding; × 10ⁿ notation).
 *
 * Throws nothing: null, undefined, NaN and ±Infinity are written as `NOT_ESTIMABLE` ("—").
 *
 * Example: formatSignificant(0.00062134, 3) is "6.21 × 10⁻⁴"; formatSignificant(1116.2, 4) is
 * "1116"; formatSignificant(-2.5, 3) is "−2.50"; formatSignificant(100, 4) is "100.0".
 */

export const NOT_ESTIMABLE = '—';
/** Smallest decimal exponent written in plain notation (0.001 is plain, 0.000 99 is not). */
export const PLAIN_MIN_EXPONENT = -3;
/** Exponent from which scientific notation is used (1 000 000 and above). */
export const PLAIN_MAX_EXPONENT = 6;

const SUPERSCRIPT: Record<string, string> = {
  '-': '⁻',
  '0': '⁰',
  '1': '¹',
  '2': '²',
  '3': '³',
  '4': '⁴',
  '5': '⁵',
  '6': '⁶',
  '7': '⁷',
  '8': '⁸',
  '9': '⁹',
};

export function formatSignificant(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NOT_ESTIMABLE;
  const figures = Math.min(Math.max(Math.round(digits), 1), 15);
  if (value === 0) return figures > 1 ? `0.${'0'.repeat(figures - 1)}` : '0';
  const [mantissa, exponentText] = value.toExponential(figures - 1).split('e');
  const exponent = Number(exponentText);
  let text: string;
  if (exponent >= PLAIN_MIN_EXPONENT && exponent < PLAIN_MAX_EXPONENT) {
    text = Number(value.toPrecision(figures)).toFixed(Math.max(figures - 1 - exponent, 0));
  } else {
    const power = String(exponent)
      .split('')
      .map((character) => SUPERSCRIPT[character] ?? character)
      .join('');
    text = `${mantissa} × 10${power}`;
  }
  return text.replace(/^-/, '−');
}

/** "[a, b]" with both bounds at the same number of significant figures; "—" when absent. */
export function formatInterval(interval: readonly [number, number] | null | undefined, digits = 3): string {
  if (!interval || !Number.isFinite(interval[0]) || !Number.isFinite(interval[1])) return NOT_ESTIMABLE;
  return `${formatSignificant(interval[0], digits)} to ${formatSignificant(interval[1], digits)}`;
}

/** A fraction in (0, 1) as a percentage with one decimal, e.g. 0.1234 → "12.3 %". */
export function formatPercent(fraction: number | null | undefined, decimals = 1): string {
  if (fraction === null || fraction === undefined || !Number.isFinite(fraction)) return NOT_ESTIMABLE;
  return `${(fraction * 100).toFixed(decimals).replace(/^-/, '−')} %`;
}
