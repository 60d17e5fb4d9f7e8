// Issue 12 §6: a time column that reads cleanly but is not the time of each pull gets a warning
// naming sheet, column and rows, and a refusal when every series would sit at one time; a
// negative value of an amount gets a cell warning. Invented data ("Veltrazine", batches VZ-…);
// the expectations are the sheet contents themselves and common practice in stability work.
import { describe, expect, it } from 'vitest';
import { type ColumnMappingInput, columnMappingSchema } from './column-mapping.ts';
import { valueCannotBeNegative } from './non-negative-unit.ts';
import { MAX_NEGATIVE_VALUE_NOTES } from './read-data-rows.ts';
import { seriesFromGrid } from './series-from-grid.ts';
import type { GridCell, SheetGrid } from './sheet-grid.ts';
import { FEW_TIMES, MANY_RESULTS_PER_TIME } from './time-column-checks.ts';

const mapping = (input: ColumnMappingInput) => columnMappingSchema.parse(input);
const texts = (list: { text: string }[]) => list.map((entry) => entry.text);

/** Two batches at 25 and 40 °C, pulls at 0, 3, 6, 9 and 12 months, first-order-like loss. */
function stabilitySheet(): SheetGrid {
  const rows: GridCell[][] = [['Batch', 'Temperature (°C)', 'Month', 'Assay (%)']];
  for (const batch of ['VZ-001', 'VZ-002']) {
    for (const [temperature, loss] of [
      [25, 0.3],
      [40, 1.1],
    ] as const) {
      for (const month of [0, 3, 6, 9, 12]) rows.push([batch, temperature, month, 100 - loss * month]);
    }
  }
  return { name: 'Stability data', rows };
}
const GOOD: ColumnMappingInput = {
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay',
  seriesColumn: 'Batch',
  temperatureColumn: 'Temperature',
};

describe('the time column check', () => {
  it('finds nothing to say about a plausible time column', () => {
    const result = seriesFromGrid([stabilitySheet()], mapping(GOOD));
    expect(result.ok).toBe(true);
    expect(result.warnings).toEqual([]);
  });

  it('refuses the temperature column (or the batch column) as time: each series would have one time', () => {
    const asTemperature = seriesFromGrid([stabilitySheet()], mapping({ ...GOOD, timeColumn: 'B' }));
    expect(!asTemperature.ok && texts(asTemperature.problems)).toEqual([
      `'Stability data': column B ("Temperature (°C)") is mapped as both the time and the temperature, so each series would have a single time: choose the column that holds the time of each pull`,
    ]);
    const sheet = stabilitySheet();
    sheet.rows = sheet.rows.map((row, index) =>
      index === 0 ? row : [index % 2 === 0 ? 1 : 2, ...row.slice(1)],
    );
    const asBatch = seriesFromGrid([sheet], mapping({ ...GOOD, timeColumn: 'Batch' }));
    expect(!asBatch.ok && texts(asBatch.problems)[0]).toMatch(
      /column A \("Batch"\) is mapped as both the time and the batch/,
    );
  });

  it('refuses a time column that repeats the temperature column in every row', () => {
    const sheet = stabilitySheet();
    sheet.rows = sheet.rows.map((row, index) => [...row, index === 0 ? 'Set point' : row[1]!]);
    const result = seriesFromGrid([sheet], mapping({ ...GOOD, timeColumn: 'Set point' }));
    expect(!result.ok && texts(result.problems)).toEqual([
      `'Stability data'!E2:E21: the time column E ("Set point") holds the same number as the temperature column B ("Temperature (°C)") in every row, so each series has a single time and no rate can be read: choose the column that holds the time of each pull (perhaps C ("Month"))`,
    ]);
  });

  it('warns, and still imports, when time = Temperature without a temperature column (the reported case)', () => {
    const result = seriesFromGrid(
      [stabilitySheet()],
      mapping({ timeColumn: 'Temperature', timeUnit: 'month', valueColumn: 'Assay', seriesColumn: 'Batch' }),
    );
    expect(result.ok).toBe(true);
    expect(texts(result.warnings)).toEqual([
      `'Stability data'!B2:B21: the time column B ("Temperature (°C)") is headed like a temperature, not a time: if it holds the storage condition, map it as the temperature column and choose the column that holds the time of each pull (perhaps C ("Month"))`,
      `'Stability data'!B2:B21: the time column B ("Temperature (°C)") has only 2 different values (25, 40) with 5 results at each value of a series on average, the same values in every series: that is how a storage condition, batch or replicate column looks, not the time of each pull. Check the mapping; if these really are few pulls with many replicates, import as it is`,
    ]);
  });

  it(`warns on few different times (≤ ${FEW_TIMES}) only with many results at each (≥ ${MANY_RESULTS_PER_TIME} on average)`, () => {
    // A replicate number mapped as time: 1, 2, 3 in every series, five rows at each.
    const replicates: GridCell[][] = [['Replicate', 'Assay']];
    for (const month of [0, 3, 6, 9, 12])
      for (const replicate of [1, 2, 3]) replicates.push([replicate, 100 - month / 4]);
    const wrong = seriesFromGrid(
      [{ name: 'S', rows: replicates }],
      mapping({ timeColumn: 'Replicate', timeUnit: 'month', valueColumn: 'Assay' }),
    );
    expect(texts(wrong.warnings)).toEqual([
      expect.stringMatching(
        /^S!A2:A16: the time column A \("Replicate"\) has only 3 different values \(1, 2, 3\) with 5 results/,
      ),
    ]);
    // An accelerated schedule 0, 3, 6 months in triplicate is normal (3 results per time).
    const accelerated: GridCell[][] = [['Month', 'Assay']];
    for (const month of [0, 3, 6])
      for (const shift of [0, 0.2, -0.2]) accelerated.push([month, 100 - month + shift]);
    const normal = seriesFromGrid(
      [{ name: 'S', rows: accelerated }],
      mapping({ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' }),
    );
    expect(normal.warnings).toEqual([]);
  });

  it('warns when the time falls down the rows of every series (time and value swapped), not when rows are shuffled', () => {
    const swapped = seriesFromGrid(
      [stabilitySheet()],
      mapping({ ...GOOD, timeColumn: 'Assay', valueColumn: 'Month' }),
    );
    expect(swapped.ok).toBe(true);
    expect(texts(swapped.warnings)).toEqual([
      `'Stability data'!D2:D21: in every series the time in D ("Assay (%)") falls down the rows (VZ-001 @ 25 °C: 100 in row 2 to 96.4 in row 6), but elapsed time rises from one pull to the next: check that the time and value columns are not swapped; if the rows are simply listed newest first, import as it is`,
    ]);
    const sheet = stabilitySheet();
    const [header, ...rows] = sheet.rows;
    const shuffled = [
      header!,
      ...rows.filter((_, index) => index % 2 === 1),
      ...rows.filter((_, index) => index % 2 === 0),
    ];
    expect(seriesFromGrid([{ ...sheet, rows: shuffled }], mapping(GOOD)).warnings).toEqual([]);
  });
});

describe('negative values of an amount', () => {
  it('get a warning on their cell and are imported as written', () => {
    const sheet: SheetGrid = {
      name: 'Impurities',
      rows: [
        ['Month', 'Impurity B (%)'],
        [0, 0.02],
        [3, -0.01],
        [6, 0.05],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Impurity B (%)', valueUnit: '%' }),
    );
    expect(result.ok).toBe(true);
    expect(texts(result.warnings)).toEqual([
      'Impurities!B3: value -0.01 is negative, but an amount in "%" cannot be: check the cell (a typing error, or a result below the quantitation limit written as a number); it is imported as written',
    ]);
    expect(result.ok && result.series[0]!.observations.map((observation) => observation.value)).toEqual([
      0.02, -0.01, 0.05,
    ]);
    // A change from the initial value may be negative: no warning.
    const change = seriesFromGrid(
      [sheet],
      mapping({
        timeColumn: 'Month',
        timeUnit: 'month',
        valueColumn: 'B',
        valueUnit: '% change from initial',
      }),
    );
    expect(change.warnings).toEqual([]);
  });

  it(`names the first ${MAX_NEGATIVE_VALUE_NOTES} cells and counts the rest in one line`, () => {
    const rows: GridCell[][] = [['Day', 'Content (mg/mL)']];
    for (let day = 0; day < 30; day += 1) rows.push([day, -1 - day]);
    const result = seriesFromGrid(
      [{ name: 'S', rows }],
      mapping({ timeColumn: 'Day', timeUnit: 'd', valueColumn: 'B', valueUnit: 'mg/mL' }),
    );
    const notes = texts(result.warnings).filter((text) => /negative/.test(text));
    expect(notes).toHaveLength(MAX_NEGATIVE_VALUE_NOTES + 1);
    expect(notes.at(-1)).toBe(
      'S!B22:B31: 10 more negative values in this column, each imported as written; check them as above',
    );
  });

  it('knows which units are amounts (common practice: contents and concentrations are not negative)', () => {
    for (const unit of [
      '%',
      '% of label claim',
      '% w/w',
      'ppm',
      'mg/mL',
      'µg/g',
      'mg',
      'mmol/L',
      'mM',
      'CFU/g',
    ])
      expect(valueCannotBeNegative(unit), unit).toBe(true);
    for (const unit of ['% change from initial', 'Δ%', 'mV', 'pH', '°', 'log CFU/g', 'AU', ''])
      expect(valueCannotBeNegative(unit), unit).toBe(false);
  });
});
