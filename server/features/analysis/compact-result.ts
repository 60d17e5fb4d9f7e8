import type { StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import type { DatasetAnalysis } from '../../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../../shared/kinetics/types.ts';

/**
 * The compact stored form of an analysis result ('compact-1', issue 16): the result as JSON
 * without its long number lists, and those lists as one buffer of exact IEEE-754 doubles.
 *
 * Why: a 100,000-point run's result was ~20 MB of JSON (every residual point an object of seven
 * numbers, each number printed in up to 24 characters), which PostgreSQL then parsed into jsonb;
 * storing and reading it dominated the upload. As doubles the same numbers take 8 bytes each, are
 * copied rather than printed and parsed, and stay bit-for-bit what the engine computed — nothing is
 * recomputed when a run is read, so what was signed stays what it was.
 *
 * The rules, applied to every array in the result:
 * - An array of at least `MIN_COLUMN_LENGTH` entries that are all numbers or null becomes
 *   `{ "$doubles": [offset, length] }`.
 * - An array of at least `MIN_COLUMN_LENGTH` objects with the same keys, every value a number or
 *   null, becomes `{ "$rows": length, "$columns": { key: offset, … } }`, one list per key.
 * - In a series' residual points (of every attribute's analysis), `time` and `value` are the
 *   observations the engine used: the dataset's series of that id, without the run's excluded
 *   points, stably sorted by time. Where they are that, bit for bit, the column is
 *   `"observations"` instead of an offset and the reference names the series (`"$series": id`),
 *   so each observation is stored once, in the dataset (immutable, like the run). Where they are
 *   not (a censored result fitted at a stated value, one left out of the fit), the column is
 *   stored as doubles like any other.
 * null is stored as NaN (the engine's results hold no NaN: non-finite numbers are null), and −0
 * as 0, as JSON would have. Objects come back with their keys in jsonb's order (shorter keys
 * first, then by bytes), as a result stored in the earlier JSON form reads; every other part of
 * the result stays JSON as before.
 *
 * Throws nothing on encoding (an array that fits no rule stays JSON). `decodeResult` throws
 * `Error` on a buffer that does not match its references (a damaged record, not a user error).
 *
 * Example: 100,000 points in four series store about 5.6 MB of doubles (7 columns less the two
 * taken from the dataset) and some 10 kB of JSON.
 */

export const COMPACT_FORM = 'compact-1';

/** Shorter lists stay JSON: below this a reference costs more than it saves. */
export const MIN_COLUMN_LENGTH = 32;

const OBSERVATIONS = 'observations';

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
interface ColumnRef {
  $rows: number;
  $columns: Record<string, number | typeof OBSERVATIONS>;
  /** The series whose observations the `"observations"` columns are. */
  $series?: string;
}
interface Observations {
  times: number[];
  values: number[];
}

export interface CompactResult {
  /** What goes in `analysis_runs.result` (jsonb). */
  json: unknown;
  /** What goes in `analysis_runs.result_arrays` (bytea). */
  arrays: Buffer;
}

class DoubleWriter {
  private buffer = new Float64Array(1024);
  length = 0;
  reserve(count: number): number {
    const offset = this.length;
    if (offset + count > this.buffer.length) {
      const grown = new Float64Array(Math.max(this.buffer.length * 2, offset + count));
      grown.set(this.buffer.subarray(0, offset));
      this.buffer = grown;
    }
    this.length += count;
    return offset;
  }
  set(index: number, value: number | null): void {
    // null → NaN; −0 → 0 (JSON prints −0 as 0, so a JSON-stored result read 0).
    this.buffer[index] = value === null ? Number.NaN : value === 0 ? 0 : value;
  }
  bytes(): Buffer {
    const view = this.buffer.subarray(0, this.length);
    const bytes = Buffer.from(view.buffer, view.byteOffset, view.byteLength);
    return isLittleEndian() ? Buffer.from(bytes) : swapped(bytes);
  }
}

const isNumberOrNull = (value: unknown) =>
  value === null || (typeof value === 'number' && Number.isFinite(value));

/** The keys shared by every entry, when every entry is an object of numbers and nulls; else null. */
function commonNumericKeys(list: readonly unknown[]): string[] | null {
  const first = list[0];
  if (first === null || typeof first !== 'object' || Array.isArray(first)) return null;
  const keys = Object.keys(first);
  if (keys.length === 0) return null;
  for (const entry of list) {
    if (entry === null || typeof entry !== 'object' || Array.isArray(entry)) return null;
    const record = entry as Record<string, unknown>;
    const own = Object.keys(record);
    if (own.length !== keys.length) return null;
    for (const key of keys) if (!(key in record) || !isNumberOrNull(record[key])) return null;
  }
  return keys;
}

/** The times and values of one series' points that are not excluded, stably sorted by time. */
function usedObservations(series: Series): Observations {
  const used = series.observations.filter((observation) => observation.excluded === undefined);
  const order = used.map((_, index) => index);
  order.sort((a, b) => used[a]!.time - used[b]!.time || a - b);
  return { times: order.map((i) => used[i]!.time), values: order.map((i) => used[i]!.value) };
}

/**
 * The used observations of each series by id: the dataset's series with the run's exclusions
 * marked (nothing else applied: a censored rule that changes a value simply makes that column not
 * match, and it is stored as doubles). An id that occurs twice gets no entry.
 */
function observationsById(seriesList: readonly Series[]): Map<string, Observations> {
  const counts = new Map<string, number>();
  for (const series of seriesList) counts.set(series.id, (counts.get(series.id) ?? 0) + 1);
  const found = new Map<string, Observations>();
  for (const series of seriesList)
    if (counts.get(series.id) === 1) found.set(series.id, usedObservations(series));
  return found;
}

function sameBits(
  list: readonly Record<string, unknown>[],
  key: string,
  reference: readonly number[],
): boolean {
  if (list.length !== reference.length) return false;
  for (let i = 0; i < list.length; i++) if (!Object.is(list[i]![key], reference[i])) return false;
  return true;
}

type Record_ = Record<string, unknown>;

/**
 * Encodes a stored result. `seriesList` is the dataset's series with the run's exclusions marked
 * (as `getAnalysisRun` rebuilds them to decode); series are matched to results by id.
 */
export function encodeResult(result: StoredAnalysisResult, seriesList: readonly Series[]): CompactResult {
  const writer = new DoubleWriter();
  const observations = observationsById(seriesList);
  const columns = (list: readonly Record_[], keys: string[], seriesId: string | null): ColumnRef => {
    const refs: ColumnRef['$columns'] = {};
    const used = seriesId === null ? undefined : observations.get(seriesId);
    let referenced = false;
    for (const key of keys) {
      const reference = key === 'time' ? used?.times : key === 'value' ? used?.values : undefined;
      if (reference !== undefined && sameBits(list, key, reference)) {
        refs[key] = OBSERVATIONS;
        referenced = true;
        continue;
      }
      const offset = writer.reserve(list.length);
      for (let i = 0; i < list.length; i++) writer.set(offset + i, list[i]![key] as number | null);
      refs[key] = offset;
    }
    return referenced && seriesId !== null
      ? { $rows: list.length, $columns: refs, $series: seriesId }
      : { $rows: list.length, $columns: refs };
  };
  const visit = (value: unknown, seriesId: string | null = null): unknown => {
    if (Array.isArray(value)) {
      if (value.length >= MIN_COLUMN_LENGTH) {
        if (value.every(isNumberOrNull)) {
          const offset = writer.reserve(value.length);
          for (let i = 0; i < value.length; i++) writer.set(offset + i, value[i] as number | null);
          return { $doubles: [offset, value.length] };
        }
        const keys = commonNumericKeys(value);
        if (keys !== null) return columns(value as Record_[], keys, seriesId);
      }
      return value.map((entry) => visit(entry));
    }
    if (value !== null && typeof value === 'object') {
      const out: Record_ = {};
      for (const [key, entry] of Object.entries(value)) out[key] = visit(entry);
      return out;
    }
    return value;
  };
  // The residual points of each series: the one place the observations recur.
  const seriesEntry = (entry: DatasetAnalysis['series'][number]): unknown => {
    const { analysis, ...entryRest } = entry;
    if (!analysis?.diagnostics) return visit(entry);
    const { diagnostics, ...rest } = analysis;
    const { points, ...otherDiagnostics } = diagnostics;
    return {
      ...(visit(entryRest) as Record_),
      analysis: {
        ...(visit(rest) as Record_),
        diagnostics: { ...(visit(otherDiagnostics) as Record_), points: visit(points, entry.id) },
      },
    };
  };
  const datasetAnalysis = (analysis: DatasetAnalysis): unknown => {
    const { series, ...rest } = analysis;
    return { ...(visit(rest) as Record_), series: series.map(seriesEntry) };
  };
  const { analysis, otherAttributes, ...top } = result;
  const json = {
    ...(visit(top) as Record_),
    analysis: datasetAnalysis(analysis),
    ...(otherAttributes === undefined
      ? {}
      : {
          otherAttributes: otherAttributes.map(({ analysis: other, ...entry }) => ({
            ...(visit(entry) as Record_),
            analysis: datasetAnalysis(other),
          })),
        }),
    $doubles: writer.length,
  };
  return { json, arrays: writer.bytes() };
}

/** jsonb's key order: shorter keys first, then by their UTF-8 bytes. */
function jsonbKeyOrder(keys: string[]): string[] {
  const bytes = new Map(keys.map((key) => [key, Buffer.from(key, 'utf8')]));
  return [...keys].sort((a, b) => {
    const left = bytes.get(a)!;
    const right = bytes.get(b)!;
    return left.length - right.length || Buffer.compare(left, right);
  });
}

/**
 * Reads a result stored in the compact form; `seriesList` as for `encodeResult`. Objects come
 * back with their keys in jsonb's order, as a result stored in the JSON form reads.
 */
export function decodeResult(
  json: unknown,
  arrays: Buffer,
  seriesList: readonly Series[],
): StoredAnalysisResult {
  const { $doubles: count, ...stored } = json as { $doubles: number } & Record_;
  if (!Number.isInteger(count) || arrays.length !== count * 8) {
    throw new Error(
      `The stored analysis arrays hold ${arrays.length} bytes; the result names ${count} doubles.`,
    );
  }
  const doubles = readDoubles(arrays);
  const observations = observationsById(seriesList);
  const number = (index: number): number | null => {
    const value = doubles[index]!;
    return Number.isNaN(value) ? null : value;
  };
  const rows = (ref: ColumnRef): Json[] => {
    const keys = jsonbKeyOrder(Object.keys(ref.$columns));
    const used = ref.$series === undefined ? undefined : observations.get(ref.$series);
    const sources = keys.map((key) => {
      const column = ref.$columns[key]!;
      if (column !== OBSERVATIONS) {
        if (!(Number.isInteger(column) && column >= 0 && column + ref.$rows <= count))
          throw new Error(`The stored analysis names doubles ${column}–${column + ref.$rows} of ${count}.`);
        return (i: number) => number(column + i);
      }
      const list = key === 'time' ? used?.times : key === 'value' ? used?.values : undefined;
      if (!list || list.length !== ref.$rows)
        throw new Error(
          `The stored analysis takes "${key}" of ${ref.$series ?? 'a series'} from observations the dataset does not hold.`,
        );
      return (i: number) => list[i]!;
    });
    const out: Json[] = new Array(ref.$rows);
    for (let i = 0; i < ref.$rows; i++) {
      const row: Record<string, Json> = {};
      for (let k = 0; k < keys.length; k++) row[keys[k]!] = sources[k]!(i);
      out[i] = row;
    }
    return out;
  };
  const visit = (value: unknown): unknown => {
    if (Array.isArray(value)) return value.map(visit);
    if (value === null || typeof value !== 'object') return value;
    const record = value as Record_;
    if ('$doubles' in record) {
      const [offset, length] = record.$doubles as [number, number];
      if (!(Number.isInteger(offset) && Number.isInteger(length) && offset >= 0 && offset + length <= count))
        throw new Error(`The stored analysis names doubles ${offset}–${offset + length} of ${count}.`);
      return Array.from({ length }, (_, i) => number(offset + i));
    }
    if ('$rows' in record && '$columns' in record) return rows(record as unknown as ColumnRef);
    const out: Record_ = {};
    for (const key of jsonbKeyOrder(Object.keys(record))) out[key] = visit(record[key]);
    return out;
  };
  return visit(stored) as StoredAnalysisResult;
}

function readDoubles(arrays: Buffer): Float64Array {
  const copy = isLittleEndian() ? Buffer.from(arrays) : swapped(arrays);
  return new Float64Array(copy.buffer, copy.byteOffset, copy.length / 8);
}

function isLittleEndian(): boolean {
  return new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
}

function swapped(bytes: Buffer): Buffer {
  const copy = Buffer.from(bytes);
  copy.swap64();
  return copy;
}
