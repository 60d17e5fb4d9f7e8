import { describe, expect, it } from 'vitest';
import type { DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { analysisFigures } from './analysis-figures.ts';
import { figureDataTables } from './figure-data-tables.ts';
import { MAX_PLOTTED_POINTS, observationValue, plotSample } from './plot-sample.ts';
import { analyseForStorage } from './stored-result.ts';

// Issue 16: a long series is drawn decimated, and the decimation keeps extremes and every flagged
// point, so a figure never looks cleaner than the data. The guarantee checked is that of min/max
// envelope decimation (Jugel et al., "M4", PVLDB 7(10), 2014): every run of consecutive points
// keeps its lowest and highest value, hence the drawn vertical extent of each run is the data's.

/** A deterministic scatter in [−1, 1) (a linear congruential sequence; common practice for test data). */
function scatter(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return (state / 2147483648) * 2 - 1;
  };
}

describe('plotSample', () => {
  it('keeps every point of a series no longer than the maximum', () => {
    const points = Array.from({ length: MAX_PLOTTED_POINTS }, (_, i) => i);
    const sample = plotSample(points, { valueOf: (value) => value });
    expect(sample.points).toEqual(points);
    expect(sample).toMatchObject({ shown: MAX_PLOTTED_POINTS, total: MAX_PLOTTED_POINTS });
  });

  it('keeps a lone point far outside the rest, which an every-k-th-point sample would drop', () => {
    const next = scatter(7);
    const values = Array.from({ length: 100_000 }, () => 99 + next() * 0.3);
    values[12_345] = 80; // one result far below the acceptance criterion
    values[67_891] = 120;
    const indices = values.map((_, index) => index);
    const sample = plotSample(indices, { valueOf: (index) => values[index]! });
    expect(sample.points).toContain(12_345);
    expect(sample.points).toContain(67_891);
    // The old rule (every 100th point) would have drawn neither.
    expect(12_345 % Math.ceil(100_000 / MAX_PLOTTED_POINTS)).not.toBe(0);
    expect(sample.shown).toBeLessThanOrEqual(MAX_PLOTTED_POINTS + 2);
    expect(sample.total).toBe(100_000);
  });

  it('every run of consecutive points keeps its lowest and highest value, and the first and last point', () => {
    const next = scatter(11);
    const values = Array.from({ length: 25_003 }, () => next());
    const indices = values.map((_, index) => index);
    const sample = plotSample(indices, { valueOf: (index) => values[index]! });
    const kept = new Set(sample.points);
    const runLength = Math.ceil(values.length / Math.floor(MAX_PLOTTED_POINTS / 2));
    for (let start = 0; start < values.length; start += runLength) {
      const run = values.slice(start, start + runLength);
      const low = start + run.indexOf(Math.min(...run));
      const high = start + run.indexOf(Math.max(...run));
      expect(kept.has(low) && kept.has(high)).toBe(true);
    }
    expect(kept.has(0) && kept.has(values.length - 1)).toBe(true);
    // In the given order, with no point twice.
    expect(sample.points).toEqual([...kept].sort((a, b) => a - b));
  });

  it('keeps every point it must, and passes over points with no value', () => {
    const values: (number | null)[] = Array.from({ length: 5000 }, (_, i) => (i % 7 === 0 ? null : i % 13));
    const indices = values.map((_, index) => index);
    const sample = plotSample(indices, {
      valueOf: (index) => values[index]!,
      mustKeep: (index) => index % 250 === 3,
    });
    for (let index = 3; index < 5000; index += 250) expect(sample.points).toContain(index);
    const interior = sample.points.filter((index) => index !== 0 && index !== 4999 && index % 250 !== 3);
    expect(interior.every((index) => values[index] !== null)).toBe(true);
    expect(observationValue({ value: 0, censored: { text: '<LOQ' } })).toBeNull();
  });
});

describe('the figures of a 20,000-point series', () => {
  const next = scatter(3);
  const series: Series = {
    id: 'LX-07 @ 40 °C',
    batch: 'LX-07',
    temperatureC: 40,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: Array.from({ length: 20_000 }, (_, i) => {
      const time = (i / 20_000) * 6;
      const value = i === 9_999 ? 88.5 : 100 * Math.exp(-0.01 * time) + next() * 0.4;
      return { time, value, source: { row: i + 2, cell: `C${i + 2}` } };
    }),
  };
  const options: DatasetOptions = { lowerLimit: 95, storageTemperatureC: 25, direction: 'decreasing' };
  const stored = analyseForStorage([series], options);
  const figures = analysisFigures(stored, [series], { lower: 95 });
  const tables = figureDataTables(stored, [series], figures);

  it('draw the one result far below the criterion, and say the figure is decimated', () => {
    const fitted = figures.find((figure) => figure.id.endsWith('-curves'))!;
    const text = JSON.stringify(fitted.spec);
    expect(text).toContain('88.5');
    const table = tables[fitted.id]!;
    expect(table.rows.some((row) => row.some((cell) => cell.startsWith('88.5')))).toBe(true);
    expect(table.note).toMatch(/^The figure draws \d+ of 20000 points \(each interval’s lowest and highest/);
    expect(text).toMatch(/showing [\d,]+ of 20,000 points \(each interval’s lowest and highest/i);
  });
});
