import { describe, expect, it } from 'vitest';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import { readWorkbook } from '../features/intake/index.ts';
import {
  DEMO_ATTRIBUTES,
  demoResultRows,
  demoResultsWorkbook,
  RESULTS_DEMO_RECIPE,
} from './demo-stability-results.ts';

describe('the demo results of four attributes', () => {
  it('is the same on every run (seeded generator)', () => {
    expect(demoResultRows()).toEqual(demoResultRows());
    expect(demoResultRows(1)).not.toEqual(demoResultRows());
  });

  it('writes degradation products below the 0.05 % reporting threshold as "<0.05", and only those', () => {
    const rows = demoResultRows();
    for (const row of rows)
      for (const level of [row.qxA, row.qxB]) {
        if (typeof level === 'string') expect(level).toBe('<0.05');
        else expect(level).toBeGreaterThanOrEqual(0.05);
      }
    expect(rows.some((row) => typeof row.qxB === 'string')).toBe(true);
  });

  it('keeps the mass balance near 100 %: the assay lost reappears as QX-A and QX-B but for 15 % (the invented model)', () => {
    // At 25 °C and 36 months: lost ≈ 5.6 % of label claim, so assay + QX-A + QX-B ≈ C0 − 0.15·lost,
    // within a few noise SDs (0.35 + 0.012 + 0.008).
    for (const row of demoResultRows().filter((entry) => entry.temperatureC === 25 && entry.month === 36)) {
      const total = row.assay + Number(row.qxA) + Number(row.qxB);
      expect(total).toBeGreaterThan(98.5);
      expect(total).toBeLessThan(101.5);
    }
  });

  it('reads back through the real intake in the wide layout: one series per attribute, batch and temperature, censored text kept', async () => {
    const intake = seriesFromGrid(
      await readWorkbook(await demoResultsWorkbook()),
      columnMappingSchema.parse(RESULTS_DEMO_RECIPE.mapping),
    );
    expect(intake.ok).toBe(true);
    if (!intake.ok) return;
    expect(intake.series).toHaveLength(4 * 3 * 4);
    expect([...new Set(intake.series.map((series) => series.attribute))].sort()).toEqual(
      DEMO_ATTRIBUTES.map((attribute) => attribute.name).sort(),
    );
    const water = intake.series.find((series) => series.attribute === 'Water');
    expect(water?.valueUnit).toBe('% w/w');
    const censored = intake.series
      .flatMap((series) => series.observations)
      .filter((point) => point.censored !== undefined);
    const rows = demoResultRows();
    const expected =
      rows.filter((row) => typeof row.qxA === 'string').length +
      rows.filter((row) => typeof row.qxB === 'string').length;
    expect(censored).toHaveLength(expected);
    expect(censored.every((point) => point.censored?.text === '<0.05' && point.value === 0.05)).toBe(true);
  });
});
