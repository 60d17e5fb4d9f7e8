// The dataset hash must not change with the faster way of writing the canonical text: each case
// is checked against `canonicalJson` (server/platform/audit/canonical-json.ts), the definition the stored
// hashes were made with, and against a hash computed here with node:crypto.
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { columnMappingSchema } from '../../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../../shared/intake/series-from-grid.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { canonicalJson } from '../../platform/audit/canonical-json.ts';
import { canonicalSeriesJson, seriesSha256 } from './datasets.ts';

const sha256 = (text: string) => createHash('sha256').update(text).digest('hex');

describe('canonicalSeriesJson', () => {
  it('writes what canonicalJson writes for series built by the intake', () => {
    const result = seriesFromGrid(
      [
        {
          name: 'Lot data',
          rows: [
            ['Lot', 'Temp', 'Month', 'Assay'],
            ['VZ-1', 25, 3, '99,1'],
            ['VZ-1', 25, 0, 100.4],
            ['VZ-2', 40, 0, 100.2],
            ['VZ-2', 40, 1.5, 97.25],
          ],
        },
      ],
      columnMappingSchema.parse({
        timeColumn: 'Month',
        timeUnit: 'month',
        valueColumn: 'Assay',
        seriesColumn: 'Lot',
        temperatureColumn: 'Temp',
      }),
    );
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(canonicalSeriesJson(result.series)).toBe(canonicalJson(result.series));
    // The intake builds its objects with sorted keys, so the canonical text is plain JSON.
    expect(JSON.stringify(result.series)).toBe(canonicalJson(result.series));
    expect(seriesSha256(result.series)).toBe(sha256(canonicalJson(result.series)));
  });

  it('writes what canonicalJson writes for series in any other key order (as jsonb returns them)', () => {
    const series = [
      {
        valueUnit: '% label claim',
        timeUnit: 'd',
        observations: [
          { value: 99.5, time: 0, source: { row: 2, cell: "'Long term'!B2" } },
          { value: 98.25, time: 7, excluded: { reason: 'vial cracked — “outlier”' }, source: { row: 3 } },
          { time: 14, value: Number.NaN },
        ],
        id: 'Ω-7',
        temperatureC: undefined,
      },
      { id: 'numbered', observations: [], timeUnit: 'h', valueUnit: 'mg/mL', 10: 'a', 2: 'b' },
    ] as unknown as Series[];
    expect(canonicalSeriesJson(series)).toBe(canonicalJson(series));
    expect(seriesSha256(series)).toBe(sha256(canonicalJson(series)));
  });
});
