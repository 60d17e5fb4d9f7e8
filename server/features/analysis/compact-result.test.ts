import { describe, expect, it } from 'vitest';
import { analyseForStorage, type StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { decodeResult, encodeResult, MIN_COLUMN_LENGTH } from './compact-result.ts';

// Invented dense series (60 monthly-spaced pulls, far more than a real study, so every residual
// list is long enough to be stored as doubles) with a fixed, hand-written noise pattern.
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26, -0.22];
function dense(id: string, temperatureC: number, k: number, shift: number, count = 60): Series {
  return {
    id,
    batch: id.slice(0, 2),
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: Array.from({ length: count }, (_, i) => ({
      time: i * 0.5,
      value: 100 * Math.exp(-k * i * 0.5) + NOISE[(i + shift) % NOISE.length]!,
    })),
  };
}
const SERIES: Series[] = [dense('LA @ 25 °C', 25, 0.004, 0), dense('LA @ 40 °C', 40, 0.02, 3)];
const OPTIONS = { lowerLimit: 95, storageTemperatureC: 25, direction: 'decreasing' as const };

/** What the JSON form reads back: JSON numbers (so −0 reads 0) with keys in jsonb's order. */
function asJsonbWouldRead(value: unknown): unknown {
  const order = (keys: string[]) =>
    [...keys].sort((a, b) => a.length - b.length || Buffer.compare(Buffer.from(a), Buffer.from(b)));
  const visit = (entry: unknown): unknown => {
    if (Array.isArray(entry)) return entry.map(visit);
    if (entry === null || typeof entry !== 'object') return entry;
    const record = entry as Record<string, unknown>;
    return Object.fromEntries(
      order(Object.keys(record).filter((key) => record[key] !== undefined)).map((key) => [
        key,
        visit(record[key]),
      ]),
    );
  };
  return visit(JSON.parse(JSON.stringify(value)));
}

function stored(seriesList: Series[] = SERIES): StoredAnalysisResult {
  return analyseForStorage(seriesList, OPTIONS);
}

describe('the compact stored result (issue 16)', () => {
  it('reads back exactly what the JSON form would read, key order included', () => {
    const result = stored();
    const { json, arrays } = encodeResult(result, SERIES);
    const decoded = decodeResult(JSON.parse(JSON.stringify(json)), arrays, SERIES);
    // JSON.stringify compares key order as well as values (toEqual ignores order).
    expect(JSON.stringify(decoded)).toBe(JSON.stringify(asJsonbWouldRead(result)));
  });

  it('takes the residual points’ times and values from the dataset instead of storing them again', () => {
    const { json, arrays } = encodeResult(stored(), SERIES);
    const text = JSON.stringify(json);
    expect(text).toContain('"$series":"LA @ 25 °C"');
    expect(text).toContain('"time":"observations"');
    expect(text).toContain('"value":"observations"');
    // The JSON keeps no long number list: every list of 60 numbers became a reference.
    expect(text).not.toMatch(new RegExp(`(-?\\d[\\d.e+-]*,){${MIN_COLUMN_LENGTH}}`));
    // And the doubles are fewer than JSON text would have been.
    expect(arrays.length).toBeLessThan(JSON.stringify(stored()).length);
  });

  it('stores a column as doubles when it is not the observations (a point excluded by the run)', () => {
    const excluded = SERIES.map((series, s) =>
      s === 0
        ? {
            ...series,
            observations: series.observations.map((o, i) =>
              i === 7 ? { ...o, excluded: { reason: 'vial cracked (invented)' } } : o,
            ),
          }
        : series,
    );
    const result = stored(excluded);
    // Encoded against the dataset *without* the exclusion, the first series' times differ.
    const { json, arrays } = encodeResult(result, SERIES);
    const first = (json as { analysis: { series: { analysis: { diagnostics: { points: unknown } } }[] } })
      .analysis.series[0]!.analysis.diagnostics.points as { $columns: Record<string, unknown> };
    expect(typeof first.$columns.time).toBe('number');
    expect(JSON.stringify(decodeResult(json, arrays, SERIES))).toBe(JSON.stringify(asJsonbWouldRead(result)));
    // Encoded against the run's own series, the reference holds again.
    const own = encodeResult(result, excluded);
    expect(JSON.stringify(own.json)).toContain('"time":"observations"');
    expect(JSON.stringify(decodeResult(own.json, own.arrays, excluded))).toBe(
      JSON.stringify(asJsonbWouldRead(result)),
    );
  });

  it('keeps null as null and −0 as 0, as JSON would', () => {
    const values = Array.from({ length: 40 }, (_, i) => (i === 3 ? null : i === 5 ? -0 : i / 7));
    const result = { ...stored(), extra: values } as unknown as StoredAnalysisResult;
    const { json, arrays } = encodeResult(result, SERIES);
    const decoded = decodeResult(json, arrays, SERIES) as unknown as { extra: (number | null)[] };
    expect(decoded.extra[3]).toBeNull();
    expect(Object.is(decoded.extra[5], 0)).toBe(true);
    expect(decoded.extra[6]).toBe(6 / 7);
  });

  it('encodes every attribute of a multi-attribute result', () => {
    const first = stored();
    const other = stored([dense('LB @ 25 °C', 25, 0.006, 2)]);
    const otherSeries = [dense('LB @ 25 °C', 25, 0.006, 2)];
    const result: StoredAnalysisResult = {
      ...first,
      otherAttributes: [
        {
          attribute: { name: 'Related substance (invented)' } as never,
          analysis: other.analysis,
          confidenceBands: other.confidenceBands,
        },
      ],
    } as StoredAnalysisResult;
    const all = [...SERIES, ...otherSeries];
    const { json, arrays } = encodeResult(result, all);
    expect(JSON.stringify(json)).toContain('"$series":"LB @ 25 °C"');
    expect(JSON.stringify(decodeResult(json, arrays, all))).toBe(JSON.stringify(asJsonbWouldRead(result)));
  });

  it('refuses a damaged record instead of reading wrong numbers', () => {
    const { json, arrays } = encodeResult(stored(), SERIES);
    expect(() => decodeResult(json, arrays.subarray(0, arrays.length - 8), SERIES)).toThrow(/bytes/);
    const text = JSON.stringify(json).replace(/"\$columns":\{"([^"]+)":(\d+)/, '"$columns":{"$1":999999999');
    expect(text).toContain('999999999');
    expect(() => decodeResult(JSON.parse(text), arrays, SERIES)).toThrow(/names doubles/);
    const shorter = SERIES.map((series) => ({ ...series, observations: series.observations.slice(1) }));
    expect(() => decodeResult(json, arrays, shorter)).toThrow(/observations the dataset does not hold/);
  });
});
