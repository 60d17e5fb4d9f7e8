import { describe, expect, it } from 'vitest';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import { readWorkbook } from '../features/intake/index.ts';
import { DEMO_BATCHES, DEMO_MAPPING, demoStabilityRows, demoWorkbook } from './demo-study.ts';

describe('the demo stability data', () => {
  it('is the same on every run (seeded generator)', () => {
    expect(demoStabilityRows()).toEqual(demoStabilityRows());
    expect(demoStabilityRows(1)).not.toEqual(demoStabilityRows());
  });

  it('covers three batches at the long-term and three accelerated temperatures', () => {
    const rows = demoStabilityRows();
    expect([...new Set(rows.map((row) => row.batch))]).toEqual([...DEMO_BATCHES]);
    expect([...new Set(rows.map((row) => row.temperatureC))]).toEqual([25, 40, 50, 60]);
    expect(rows).toHaveLength(3 * (8 + 5 + 5 + 6));
  });

  it('follows a first-order loss C0·e^(−kt) within the stated noise (OpenStax Chemistry 2e §12.4)', () => {
    // At 25 °C k = 0.0016/month and C0 ≈ 100.4: the values stay within 5 noise SDs (0.35)
    // plus batch differences (±0.3 in C0, ±8 % in k) of the model curve.
    for (const row of demoStabilityRows().filter((entry) => entry.temperatureC === 25)) {
      const model = 100.4 * Math.exp(-0.0016 * row.month);
      expect(Math.abs(row.assay - model)).toBeLessThan(
        5 * 0.35 + 0.3 + 100.4 * 0.08 * 0.0016 * row.month + 0.05,
      );
    }
  });

  it('reads back through the real intake into one series per batch and temperature, values unchanged', async () => {
    const intake = seriesFromGrid(
      await readWorkbook(await demoWorkbook()),
      columnMappingSchema.parse(DEMO_MAPPING),
    );
    expect(intake.ok).toBe(true);
    if (!intake.ok) return;
    expect(intake.series).toHaveLength(12);
    const values = intake.series
      .flatMap((series) => series.observations.map((point) => point.value))
      .sort((a, b) => a - b);
    expect(values).toEqual(
      demoStabilityRows()
        .map((row) => row.assay)
        .sort((a, b) => a - b),
    );
  });
});
