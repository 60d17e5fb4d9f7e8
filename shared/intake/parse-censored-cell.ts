/**
 * Reads a result reported below a limit ("<LOQ", "< 0.05", "<0,05"): a censored value.
 *
 * Degradation products that rise from below the reporting threshold are written this way in
 * stability tables (common practice: "<LOQ", "<QL", "< 0.05"). The cell
 * is read as "below a limit", never as a number: the text is kept as written (trimmed) and the
 * limit is kept when the cell states one. The study's rule for censored values decides how the
 * point enters the fit (`kinetics/stability/study-attributes.ts`), so the intake only reads it.
 *
 * Accepted: "<" then, after optional spaces, either a positive number (decimal comma or point, as
 * `parse-number-cell.ts` reads numbers: "<0,05" is 0.05) or the name of a limit — LOQ, LOD, QL,
 * DL, RT (reporting threshold) or RL (reporting limit), in any case. Refused, with a reason for
 * the message beside the cell reference: "<" alone (no limit), a limit that is zero or negative
 * ("< -1"), "<=" or "≤" (a result at or below a limit is not "below the limit": write "<0.05"),
 * and anything else after "<" ("<abc").
 *
 * Only value cells are read this way; time, temperature and temperature-log cells are numbers
 * only (`parseNumberCell`).
 *
 * Never throws. Returns null when the cell does not start with "<" or "≤" (so the caller reads
 * it as a number), `{ ok: true, censored, value }` when it reads, `{ ok: false, reason }` when not.
 *
 * Example: `parseCensoredCell('< 0,05')` is
 * `{ ok: true, censored: { limit: 0.05, text: '< 0,05' }, value: 0.05 }`;
 * `parseCensoredCell('<LOQ')` is `{ ok: true, censored: { text: '<LOQ' }, value: 0 }`.
 */
import type { Observation } from '../kinetics/types.ts';
import type { GridCell } from './sheet-grid.ts';

export type CensoredCell = NonNullable<Observation['censored']>;

export type CensoredCellResult =
  | { ok: true; censored: CensoredCell; value: number }
  | { ok: false; reason: string };

/** The limits a cell may name instead of a number, upper case. */
export const NAMED_LIMITS = ['LOQ', 'LOD', 'QL', 'DL', 'RT', 'RL'] as const;

const LIMIT_NUMBER = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)(e[+-]?\d+)?$/i;
const HOW = 'write a limit as "<LOQ" (or LOD, QL, DL, RT, RL) or as "<" and a number, e.g. "<0.05"';

export function parseCensoredCell(cell: GridCell | undefined): CensoredCellResult | null {
  if (typeof cell !== 'string') return null;
  const text = cell.trim();
  if (!text.startsWith('<') && !text.startsWith('≤')) return null;
  if (text.startsWith('≤') || text.startsWith('<=')) {
    return {
      ok: false,
      reason: `"${text}" says at or below a limit; a result below a limit is written with "<" alone: ${HOW}`,
    };
  }
  const rest = text.slice(1).trim();
  if (rest === '') return { ok: false, reason: `"${text}" names no limit: ${HOW}` };
  const named = NAMED_LIMITS.find((name) => name === rest.toUpperCase());
  // Keys in sorted order (limit, text): the dataset's canonical JSON is plain JSON.stringify.
  if (named !== undefined) return { ok: true, censored: { text }, value: 0 };
  const compact = rest.replace(/\s+/g, '');
  if (LIMIT_NUMBER.test(compact)) {
    const limit = Number(compact.replace(',', '.'));
    if (!Number.isFinite(limit)) return { ok: false, reason: `"${text}": the limit is not a finite number` };
    if (limit <= 0) {
      return {
        ok: false,
        reason: `"${text}": a reporting or quantitation limit is above zero; check the cell`,
      };
    }
    return { ok: true, censored: { limit, text }, value: limit };
  }
  return { ok: false, reason: `"${text}" is not a number or a limit: ${HOW}` };
}
