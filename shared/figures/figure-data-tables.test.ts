import { describe, expect, it } from 'vitest';
import { analyseDataset, type DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { analysisFigures } from './analysis-figures.ts';
import { figureDataTables } from './figure-data-tables.ts';
import { formatSignificant } from './significant-figures.ts';
import { confidenceBands, type StoredAnalysisResult } from './stored-result.ts';

// Issue 17 §4: each figure has a table of the numbers it draws. Invented first-order data
// (C0 = 100) with a fixed, hand-written noise pattern; one excluded point; order fixed at first.
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26, -0.22];
const MONTHS = [0, 3, 6, 9, 12, 18, 24, 36];
function series(id: string, batch: string, temperatureC: number, k: number, shift: number): Series {
  return {
    id,
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: MONTHS.map((time, index) => ({
      time,
      value: 100 * Math.exp(-k * time) + NOISE[(index + shift) % NOISE.length]!,
      source: { row: index + 2, cell: `Sheet1!C${index + 2}` },
    })),
  };
}
const SERIES: Series[] = [
  series('A @ 25 °C', 'A', 25, 0.004, 0),
  series('B @ 25 °C', 'B', 25, 0.0042, 3),
  series('A @ 40 °C', 'A', 40, 0.03, 1),
  series('A @ 60 °C', 'A', 60, 0.1, 2),
];
SERIES[1]!.observations[4]!.excluded = { reason: 'vial cracked (test)' };
const OPTIONS: DatasetOptions = {
  lowerLimit: 95,
  storageTemperatureC: 25,
  direction: 'decreasing',
  order: 1,
};
const number = (value: number) => formatSignificant(value, 4);

function stored(): StoredAnalysisResult {
  const analysis = analyseDataset(SERIES, OPTIONS);
  return { analysis, confidenceBands: confidenceBands(analysis, SERIES, OPTIONS) };
}
function tablesOf(result: StoredAnalysisResult) {
  return figureDataTables(result, SERIES, analysisFigures(result, SERIES, { lower: 95 }, 25));
}

describe('figureDataTables', () => {
  const result = stored();
  const tables = tablesOf(result);

  it('gives every figure a table, with a caption, column headings and one cell per heading in each row', () => {
    expect(Object.keys(tables)).toEqual(
      analysisFigures(result, SERIES, { lower: 95 }, 25).map((figure) => figure.id),
    );
    for (const [id, table] of Object.entries(tables)) {
      expect(table.caption, id).not.toBe('');
      expect(table.rows.length, id).toBeGreaterThan(0);
      for (const row of table.rows) expect(row, id).toHaveLength(table.columns.length);
    }
  });

  it('lists each point of the curves figure with the fitted value C0·e^(−kt) and residual of each law, excluded points flagged', () => {
    const table = tables['series-1-curves']!;
    const model = result.analysis.series[1]!.analysis!.models.find((candidate) => candidate.order === 1)!;
    const fittedColumn = table.columns.indexOf('first order: fitted');
    expect(fittedColumn).toBeGreaterThan(2);
    expect(table.columns[fittedColumn + 1]).toBe('first order: residual');
    expect(table.rows).toHaveLength(MONTHS.length);
    SERIES[1]!.observations.forEach((observation, index) => {
      const fitted = model.c0! * Math.exp(-model.k! * observation.time);
      const row = table.rows[index]!;
      expect(row[0]).toBe(number(observation.time));
      expect(row[1]).toBe(number(observation.value));
      expect(row[2]).toBe(index === 4 ? 'excluded: vial cracked (test)' : 'used');
      expect(row[fittedColumn]).toBe(number(fitted));
      expect(row[fittedColumn + 1]).toBe(number(observation.value - fitted));
    });
  });

  it('takes the numbers from the stored result, not from a new fit', () => {
    // As if an older engine had stored another rate constant: the table follows the record.
    const older = structuredClone(result);
    const model = older.analysis.series[0]!.analysis!.models.find((candidate) => candidate.order === 1)!;
    model.k = model.k! * 2;
    older.analysis.series[0]!.analysis!.diagnostics!.points[2]!.fitted = 12.5;
    const olderTables = tablesOf(older);
    const fittedColumn = olderTables['series-0-curves']!.columns.indexOf('first order: fitted');
    const time = SERIES[0]!.observations[3]!.time;
    expect(olderTables['series-0-curves']!.rows[3]![fittedColumn]).toBe(
      number(model.c0! * Math.exp(-model.k! * time)),
    );
    expect(olderTables['series-0-curves']!.rows[3]![fittedColumn]).not.toBe(
      tables['series-0-curves']!.rows[3]![fittedColumn],
    );
    expect(olderTables['series-0-residuals']!.rows[2]![2]).toBe('12.50');
  });

  it('lists the residual figure with the stored diagnostics and the outlier flag', () => {
    const table = tables['series-0-residuals']!;
    const points = result.analysis.series[0]!.analysis!.diagnostics!.points;
    expect(table.columns.at(-1)).toBe('Flag');
    expect(table.rows.map((row) => row[3])).toEqual(points.map((point) => number(point.residual!)));
    expect(table.rows.every((row) => row.at(-1) === 'within threshold')).toBe(true);
  });

  it('lists the Q1E plot: each used result of each batch with the mean of its line and the residual', () => {
    const table = tables['q1e-25']!;
    const condition = result.analysis.shelfLife!.find((entry) => entry.temperatureC === 25)!;
    // The excluded result of batch B is not drawn, so not listed.
    expect(table.rows).toHaveLength(2 * MONTHS.length - 1);
    const row = table.rows.find((cells) => cells[0] === 'A @ 25 °C' && cells[1] === number(12))!;
    const line = condition.result!.lines.find((entry) => entry.batches.includes('A @ 25 °C'))!;
    const mean = Math.exp(line.interceptAtTimeZero + line.slope * 12);
    expect(condition.transform).toBe('ln');
    expect(row[3]).toBe(line.label);
    expect(row[4]).toBe(number(mean));
    expect(row[5]).toBe(number(SERIES[0]!.observations[4]!.value - mean));
    // The same mean as the plotted grid, where the grid has a point at that time.
    const gridPoint = line.grid.find((point) => point.mean !== null && point.time > 0)!;
    expect(Math.exp(line.interceptAtTimeZero + line.slope * gridPoint.time)).toBeCloseTo(gridPoint.mean!, 10);
  });

  it('lists the Arrhenius points at 1000/T with the line and residual, and the prediction with its interval', () => {
    const table = tables.arrhenius!;
    const pooled = table.rows.find((row) => row[0]!.startsWith('pooled at 40 °C'))!;
    expect(pooled[2]).toBe(number(1000 / 313.15));
    const prediction = table.rows.at(-1)!;
    expect(prediction[0]).toMatch(/^predicted at 25 °C/);
    const interval = result.analysis.arrhenius!.prediction!.confidenceInterval!;
    expect(prediction[6]).toBe(`${number(Math.log(interval[0]))} to ${number(Math.log(interval[1]))}`);
    // A series point: its own ln k, the line's value at its temperature and the difference.
    const own = table.rows.find((row) => row[0] === 'A @ 60 °C')!;
    const k = result.analysis.series[3]!.analysis!.models.find((model) => model.order === 1)!.k!;
    expect(own[3]).toBe(number(Math.log(k)));
  });
});
