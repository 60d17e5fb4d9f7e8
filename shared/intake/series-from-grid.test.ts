// Fixtures: an invented product, "Veltrazine 10 mg tablets", batches VZ-001..VZ-003 (fictional).
// Expected values are the sheet contents themselves; the rules checked are spreadsheet
// conventions (A1 references, ECMA-376) and common practice in stability data handling.
import { describe, expect, it } from 'vitest';
import { type ColumnMappingInput, columnMappingSchema } from './column-mapping.ts';
import { seriesFromGrid } from './series-from-grid.ts';
import type { SheetGrid } from './sheet-grid.ts';

const mapping = (input: ColumnMappingInput) => columnMappingSchema.parse(input);

describe('seriesFromGrid', () => {
  it('reads one series, sorting rows, keeping replicates and decimal commas', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [['Month', 'Assay (%)'], [6, '97,9'], [0, 100.1], [3, 98.8], [0, '100,3'], [], [null, '  ']],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 'month', timeUnit: 'month', valueColumn: 'Assay (%)' }),
    );
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.series).toHaveLength(1);
    const [series] = result.series;
    expect(series?.id).toBe('Assay (%)');
    expect(series?.timeUnit).toBe('month');
    expect(series?.observations.map((o) => [o.time, o.value])).toEqual([
      [0, 100.1],
      [0, 100.3],
      [3, 98.8],
      [6, 97.9],
    ]);
    expect(series?.observations[0]?.source).toEqual({ row: 3, cell: 'Sheet1!B3' });
  });

  it('reports every problem at once, each with its cell reference', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Time', 'Assay', 'Batch'],
        [0, 100.2, 'VZ-001'],
        [3, { formulaWithoutValue: 'B2-1.1' }, 'VZ-001'],
        ['three', 98.1, 'VZ-001'],
        [6, 97.5, null],
        [null, 96.9, 'VZ-001'],
        [9, 'n/a', 'VZ-001'],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 'Time', timeUnit: 'month', valueColumn: 'Assay', seriesColumn: 'Batch' }),
    );
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.problems.map((problem) => problem.text)).toEqual([
      'Sheet1!B3: formula without a stored value — open and save the workbook in a spreadsheet program, or paste values',
      'Sheet1!A4: "three" is not a number',
      'Sheet1!C5: no batch name given',
      'Sheet1!A6: no time given for this value',
      'Sheet1!B7: "n/a" is not a number',
    ]);
  });

  it('skips a planned pull point without a result, with a warning', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['t', 'y'],
        [0, 100],
        [3, 99],
        [6, null],
      ],
    };
    const result = seriesFromGrid([sheet], mapping({ timeColumn: 't', timeUnit: 'month', valueColumn: 'y' }));
    expect(result.ok && result.series[0]?.observations).toHaveLength(2);
    expect(result.warnings.map((warning) => warning.text)).toEqual(['Sheet1!B4: no value; row skipped']);
  });

  it('forms one series per batch and temperature, converting kelvin to °C', () => {
    const rows: SheetGrid['rows'] = [['Batch', 'T (K)', 'Week', 'Assay']];
    for (const [batch, kelvin] of [
      ['VZ-001', 298.15],
      ['VZ-001', 313.15],
      ['VZ-002', 313.15],
    ] as const) {
      for (const week of [0, 2, 4]) rows.push([batch, kelvin, week, 100 - week * (kelvin - 290) * 0.01]);
    }
    const result = seriesFromGrid(
      [{ name: 'Accelerated', rows }],
      mapping({
        timeColumn: 'Week',
        timeUnit: 'week',
        valueColumn: 'Assay',
        seriesColumn: 'Batch',
        temperatureColumn: 'T (K)',
        temperatureUnit: 'K',
      }),
    );
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.series.map((series) => [series.id, series.batch, series.temperatureC])).toEqual([
      ['VZ-001 @ 25 °C', 'VZ-001', 25],
      ['VZ-001 @ 40 °C', 'VZ-001', 40],
      ['VZ-002 @ 40 °C', 'VZ-002', 40],
    ]);
  });

  it('turns sampling dates into calendar months since the first sample of each series', () => {
    const sheet: SheetGrid = {
      name: 'Dates',
      rows: [
        ['Pulled', 'Assay'],
        [new Date('2024-01-15T00:00:00Z'), 100.4],
        ['2024-04-15', 99.6],
        ['15.07.2024', 98.9],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 'Pulled', timeFormat: 'datetime', timeUnit: 'month', valueColumn: 'Assay' }),
    );
    expect(result.ok && result.series[0]?.observations.map((o) => o.time)).toEqual([0, 3, 6]);
  });

  it('asks for the date-time format when an elapsed-time column holds dates', () => {
    const sheet: SheetGrid = {
      name: 'S',
      rows: [
        ['t', 'y'],
        [new Date('2024-01-01'), 100],
      ],
    };
    const result = seriesFromGrid([sheet], mapping({ timeColumn: 't', timeUnit: 'd', valueColumn: 'y' }));
    expect(!result.ok && result.problems[0]?.text).toBe(
      'S!A2: is a date, not a number (this column holds dates: choose the date-time format)',
    );
  });

  it('finds a header written once in a merged block, and batch names merged over replicate rows', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Time (h)', 'Result', null],
        [null, 'Assay', 'Impurity'],
        [0, 100.0, 0.1],
        [24, 99.1, 0.3],
      ],
      merges: [
        { top: 0, left: 0, bottom: 1, right: 0 },
        { top: 0, left: 1, bottom: 0, right: 2 },
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ headerRow: 2, timeColumn: 'time (h)', timeUnit: 'h', valueColumn: 'Assay' }),
    );
    expect(result.ok && result.series[0]?.observations.map((o) => o.value)).toEqual([100.0, 99.1]);

    const replicates: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Batch', 't', 'y'],
        ['VZ-003', 0, 100.2],
        [null, 0, 99.9],
        [null, 1, 99.0],
      ],
      merges: [{ top: 1, left: 0, bottom: 3, right: 0 }],
    };
    const grouped = seriesFromGrid(
      [replicates],
      mapping({ timeColumn: 't', timeUnit: 'month', valueColumn: 'y', seriesColumn: 'Batch' }),
    );
    expect(grouped.ok && grouped.series.map((series) => [series.id, series.observations.length])).toEqual([
      ['VZ-003', 3],
    ]);
  });

  it('reads columns by letter when there is no header row', () => {
    const sheet: SheetGrid = {
      name: 'raw',
      rows: [
        [0, 'x', 1.0],
        [10, 'x', 0.9],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ headerRow: 0, timeColumn: 'A', timeUnit: 's', valueColumn: 'c' }),
    );
    expect(result.ok && result.series[0]?.observations.map((o) => o.value)).toEqual([1.0, 0.9]);
  });

  it('reports a repeated replicate label at one time', () => {
    const sheet: SheetGrid = {
      name: 'S',
      rows: [
        ['t', 'y', 'rep'],
        [0, 100, 1],
        [0, 99.8, 1],
        [0, 99.9, 2],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 't', timeUnit: 'd', valueColumn: 'y', replicateColumn: 'rep' }),
    );
    expect(!result.ok && result.problems.map((problem) => problem.text)).toEqual([
      'S!B3: replicate "1" at this time already given in row 2',
    ]);
  });

  it('explains sheet-level problems: missing sheet, empty sheet, unknown or ambiguous header', () => {
    const base = mapping({ timeColumn: 'Time', timeUnit: 'd', valueColumn: 'Assay' });
    const good: SheetGrid = {
      name: 'Data',
      rows: [
        ['Time', 'Assay', 'Assay'],
        [0, 1, 1],
      ],
    };
    expect(seriesFromGrid([], base)).toMatchObject({
      ok: false,
      problems: [{ text: 'the file has no sheets' }],
    });
    expect(seriesFromGrid([good], { ...base, sheet: 'Other' })).toMatchObject({
      ok: false,
      problems: [{ text: 'no sheet named "Other" (sheets: Data)' }],
    });
    expect(seriesFromGrid([{ name: 'Sheet1', rows: [[null], []] }], base)).toMatchObject({
      ok: false,
      problems: [{ text: 'Sheet1: the sheet is empty' }],
    });
    expect(seriesFromGrid([good], base)).toMatchObject({
      ok: false,
      problems: [
        {
          text: 'Data: value column: the header "Assay" appears in columns B and C; name the column by its letter',
        },
      ],
    });
    expect(seriesFromGrid([good], { ...base, valueColumn: 'Potency' })).toMatchObject({
      ok: false,
      problems: [
        {
          text: 'Data: value column: no column headed "Potency" in header row 1 (headers: Time, Assay, Assay)',
        },
      ],
    });
    expect(
      seriesFromGrid([{ name: 'Data', rows: [['Time', 'Assay']] }], { ...base, valueColumn: 'B' }),
    ).toMatchObject({
      ok: false,
      problems: [{ text: 'Data: no data rows below header row 1' }],
    });
  });

  it('refuses negative times and temperatures below absolute zero', () => {
    const sheet: SheetGrid = {
      name: 'S',
      rows: [
        ['t', 'y', 'T'],
        [-1, 100, 25],
        [1, 99, -300],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 't', timeUnit: 'd', valueColumn: 'y', temperatureColumn: 'T' }),
    );
    expect(!result.ok && result.problems.map((problem) => problem.text)).toEqual([
      'S!A2: time -1 is negative; times are elapsed since the first sample',
      'S!C3: -300 °C is below absolute zero',
    ]);
  });
});
