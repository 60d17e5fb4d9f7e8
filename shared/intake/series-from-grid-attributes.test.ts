// Fixtures: the invented "Veltrazine 10 mg tablets", batches VZ-001/VZ-002 (fictional), measured
// for assay, a degradation product "Impurity B" and water. Expected values are the sheet contents
// themselves; the layouts (one column per attribute, or an attribute-name column) are the two
// common ones of stability exports (common practice, issue 15 §1).
import { describe, expect, it } from 'vitest';
import type { Series } from '../kinetics/types.ts';
import { type ColumnMappingInput, columnMappingSchema } from './column-mapping.ts';
import { seriesFromGrid } from './series-from-grid.ts';
import type { SheetGrid } from './sheet-grid.ts';

const mapping = (input: ColumnMappingInput) => columnMappingSchema.parse(input);

/** The same value with the keys of every object sorted, as the dataset's canonical JSON has them. */
function sortedKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortedKeys);
  if (value === null || typeof value !== 'object') return value;
  return Object.fromEntries(
    Object.keys(value)
      .sort()
      .map((key) => [key, sortedKeys((value as Record<string, unknown>)[key])]),
  );
}

const WIDE: SheetGrid = {
  name: 'Sheet1',
  rows: [
    ['Batch', 'Temp', 'Month', 'Assay (%)', 'Impurity B (%)', 'Water'],
    ['VZ-001', 25, 0, 100.1, '<LOQ', 2.1],
    ['VZ-001', 25, 3, 99.4, '< 0,05', 2.2],
    ['VZ-001', 25, 6, 98.8, 0.08, null],
    ['VZ-001', 40, 0, 100.0, '<LOQ', 2.0],
    ['VZ-001', 40, 3, 97.2, 0.15, 2.6],
  ],
};

const WIDE_MAPPING: ColumnMappingInput = {
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay (%)',
  valueUnit: '% of label claim',
  valueAttribute: 'Assay',
  moreValueColumns: [
    { column: 'Impurity B (%)', attribute: 'Impurity B', unit: '% area' },
    { column: 'F', attribute: 'Water', unit: '% w/w' },
  ],
  seriesColumn: 'Batch',
  temperatureColumn: 'Temp',
};

describe('seriesFromGrid with one column per attribute (wide)', () => {
  it('gives each attribute its series, prefixed ids, units per column and censored cells with their text', () => {
    const result = seriesFromGrid([WIDE], mapping(WIDE_MAPPING));
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.series.map((series) => [series.id, series.attribute, series.valueUnit])).toEqual([
      ['Assay · VZ-001 @ 25 °C', 'Assay', '% of label claim'],
      ['Assay · VZ-001 @ 40 °C', 'Assay', '% of label claim'],
      ['Impurity B · VZ-001 @ 25 °C', 'Impurity B', '% area'],
      ['Impurity B · VZ-001 @ 40 °C', 'Impurity B', '% area'],
      ['Water · VZ-001 @ 25 °C', 'Water', '% w/w'],
      ['Water · VZ-001 @ 40 °C', 'Water', '% w/w'],
    ]);
    const impurity = result.series[2]!;
    expect(impurity.observations).toEqual([
      { censored: { text: '<LOQ' }, source: { cell: 'Sheet1!E2', row: 2 }, time: 0, value: 0 },
      {
        censored: { limit: 0.05, text: '< 0,05' },
        source: { cell: 'Sheet1!E3', row: 3 },
        time: 3,
        value: 0.05,
      },
      { source: { cell: 'Sheet1!E4', row: 4 }, time: 6, value: 0.08 },
    ]);
    // The blank water cell is skipped with a note on its cell; the row's other values are kept.
    expect(result.series[4]!.observations.map((observation) => observation.time)).toEqual([0, 3]);
    expect(result.warnings.map((warning) => warning.text)).toContain(
      'Sheet1!F4: no value for Water; cell skipped',
    );
    // Keys in sorted order at every level, new keys included: the hash is plain JSON.stringify.
    expect(JSON.stringify(result.series)).toBe(JSON.stringify(sortedKeys(result.series)));
  });

  it('keeps the ids of today when the one attribute is named, and says which it is', () => {
    const result = seriesFromGrid(
      [WIDE],
      mapping({
        timeColumn: 'Month',
        timeUnit: 'month',
        valueColumn: 'Assay (%)',
        valueAttribute: 'Assay',
        seriesColumn: 'Batch',
        temperatureColumn: 'Temp',
      }),
    );
    expect(result.ok && result.series.map((series) => [series.id, series.attribute])).toEqual([
      ['VZ-001 @ 25 °C', 'Assay'],
      ['VZ-001 @ 40 °C', 'Assay'],
    ]);
  });

  it('names the attribute alone when there is neither batch nor temperature, and spells names as the study does', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Month', 'A', 'B'],
        [0, 100, '<QL'],
        [3, 99, 0.1],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({
        timeColumn: 'Month',
        timeUnit: 'month',
        valueColumn: 'A',
        valueAttribute: 'impurity b ',
        moreValueColumns: [{ column: 'B', attribute: 'ASSAY' }],
      }),
      { attributes: ['Assay', 'Impurity B'] },
    );
    expect(
      result.ok && result.series.map((series) => [series.id, series.attribute, series.valueUnit]),
    ).toEqual([
      ['Assay', 'Assay', '%'],
      ['Impurity B', 'Impurity B', '%'],
    ]);
  });

  it('refuses a mapping attribute the study does not have, naming the field and the study attributes', () => {
    const result = seriesFromGrid([WIDE], mapping(WIDE_MAPPING), { attributes: ['Assay', 'Impurity B'] });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const expected = [
      'mapping field moreValueColumns[1].attribute: the value column "F" is matched to "Water", which is not an attribute of this study: the study\'s attributes are Assay and Impurity B',
    ];
    expect(result.problems.map((problem) => problem.text)).toEqual(expected);
    expect(result.attributeProblems?.map((problem) => problem.text)).toEqual(expected);
  });

  it('refuses a column mapped twice on its header cell', () => {
    const twiceValue = seriesFromGrid(
      [WIDE],
      mapping({ ...WIDE_MAPPING, moreValueColumns: [{ column: 'D', attribute: 'Impurity B' }] }),
    );
    expect(!twiceValue.ok && twiceValue.problems.map((problem) => problem.text)).toEqual([
      'Sheet1!D1: column D ("Assay (%)") is mapped twice, as the value column of Assay and as the value column of Impurity B: give each column one role',
    ]);
    const twiceBatch = seriesFromGrid(
      [WIDE],
      mapping({ ...WIDE_MAPPING, moreValueColumns: [{ column: 'Batch', attribute: 'Impurity B' }] }),
    );
    expect(!twiceBatch.ok && twiceBatch.problems.map((problem) => problem.text)).toEqual([
      'Sheet1!A1: column A ("Batch") is mapped twice, as the batch column and as the value column of Impurity B: give each column one role',
    ]);
    const missing = seriesFromGrid(
      [WIDE],
      mapping({ ...WIDE_MAPPING, moreValueColumns: [{ column: 'Water (%)', attribute: 'Water' }] }),
    );
    expect(!missing.ok && missing.problems[0]?.text).toMatch(
      /^Sheet1: value column of Water: no column headed "Water \(%\)" in header row 1/,
    );
  });

  it('names every bad cell: a censored text that does not read, and "<" in time or temperature cells', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Batch', 'Temp', 'Month', 'Assay (%)', 'Impurity B (%)', 'Water'],
        ['VZ-001', 25, 0, 100.1, '<abc', 2.1],
        ['VZ-001', '<25', '<1', 99.4, '< -1', 2.2],
        ['VZ-001', 25, 6, '<=98', 0.08, 2.3],
      ],
    };
    const result = seriesFromGrid([sheet], mapping(WIDE_MAPPING));
    expect(!result.ok && result.problems.map((problem) => problem.text)).toEqual([
      'Sheet1!E2: "<abc" is not a number or a limit: write a limit as "<LOQ" (or LOD, QL, DL, RT, RL) or as "<" and a number, e.g. "<0.05"',
      'Sheet1!C3: "<1" is not a number',
      'Sheet1!E3: "< -1": a reporting or quantitation limit is above zero; check the cell',
      'Sheet1!B3: "<25" is not a number',
      'Sheet1!D4: "<=98" says at or below a limit; a result below a limit is written with "<" alone: write a limit as "<LOQ" (or LOD, QL, DL, RT, RL) or as "<" and a number, e.g. "<0.05"',
    ]);
  });
});

const LONG: SheetGrid = {
  name: 'Results',
  rows: [
    ['Batch', 'Month', 'Test', 'Result'],
    ['VZ-001', 0, 'Assay', 100.2],
    ['VZ-001', 0, 'impurity b', '<LOQ'],
    ['VZ-001', 3, 'Assay', 99.5],
    ['VZ-001', 3, 'Impurity B', 0.06],
    ['VZ-002', 0, 'Assay', 100.0],
    ['VZ-002', 3, 'Assay', 99.1],
  ],
};

describe('seriesFromGrid with an attribute-name column (long)', () => {
  const LONG_MAPPING: ColumnMappingInput = {
    timeColumn: 'Month',
    timeUnit: 'month',
    valueColumn: 'Result',
    attributeColumn: 'Test',
    seriesColumn: 'Batch',
  };

  it('groups rows by attribute, one spelling per attribute (the first written, or the study’s)', () => {
    const result = seriesFromGrid([LONG], mapping(LONG_MAPPING));
    expect(
      result.ok && result.series.map((series) => [series.id, series.attribute, series.observations.length]),
    ).toEqual([
      ['Assay · VZ-001', 'Assay', 2],
      ['Assay · VZ-002', 'Assay', 2],
      ['impurity b · VZ-001', 'impurity b', 2],
    ]);
    const study = seriesFromGrid([LONG], mapping(LONG_MAPPING), { attributes: ['Impurity B', 'Assay'] });
    expect(study.ok).toBe(true);
    if (!study.ok) return;
    const series = study.series as Series[];
    expect(series.map((entry) => entry.id)).toEqual([
      'Impurity B · VZ-001',
      'Assay · VZ-001',
      'Assay · VZ-002',
    ]);
    expect(series[0]!.observations[0]).toEqual({
      censored: { text: '<LOQ' },
      source: { cell: 'Results!D3', row: 3 },
      time: 0,
      value: 0,
    });
    expect(JSON.stringify(series)).toBe(JSON.stringify(sortedKeys(series)));
  });

  it('refuses a row whose attribute cell is blank, naming the cell', () => {
    const sheet: SheetGrid = { ...LONG, rows: [...LONG.rows, ['VZ-002', 6, '  ', 98.7]] };
    const result = seriesFromGrid([sheet], mapping(LONG_MAPPING));
    expect(!result.ok && result.problems.map((problem) => problem.text)).toEqual([
      'Results!C8: no attribute name given',
    ]);
  });

  it('refuses names the study does not have, once per name on its first cell, with the count', () => {
    const sheet: SheetGrid = {
      ...LONG,
      rows: [...LONG.rows, ['VZ-002', 0, 'Water', 2.1], ['VZ-002', 3, 'water', 2.3]],
    };
    const result = seriesFromGrid([sheet], mapping(LONG_MAPPING), { attributes: ['Assay', 'Impurity B'] });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const expected = [
      'Results!C8: "Water" is not an attribute of this study (2 rows name it, the first here): the study\'s attributes are Assay and Impurity B; correct the cells or the study\'s attributes',
    ];
    expect(result.attributeProblems?.map((problem) => problem.text)).toEqual(expected);
    expect(result.problems.map((problem) => problem.text)).toEqual(expected);
  });

  it('refuses the attribute column mapped as another role, on its header cell', () => {
    const result = seriesFromGrid([LONG], mapping({ ...LONG_MAPPING, attributeColumn: 'Batch' }));
    expect(!result.ok && result.problems.map((problem) => problem.text)).toEqual([
      'Results!A1: column A ("Batch") is mapped twice, as the batch column and as the attribute column: give each column one role',
    ]);
  });
});

describe('columnMappingSchema for attributes', () => {
  const base = { timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' } as const;
  const issues = (input: unknown) => {
    const parsed = columnMappingSchema.safeParse(input);
    return parsed.success ? [] : parsed.error.issues.map((issue) => [issue.path.join('.'), issue.message]);
  };

  it('adds no attribute keys to a mapping that names none', () => {
    expect(Object.keys(columnMappingSchema.parse(base)).sort()).toEqual(
      [
        'headerRow',
        'temperatureUnit',
        'timeColumn',
        'timeFormat',
        'timeUnit',
        'valueColumn',
        'valueUnit',
      ].sort(),
    );
  });

  it('refuses both layouts at once, further columns without the first attribute, and an attribute named twice', () => {
    expect(issues({ ...base, valueAttribute: 'Assay', attributeColumn: 'Test' })).toEqual([
      [
        'attributeColumn',
        'Choose one layout: an attribute per value column, or a column naming the attribute of each row, not both.',
      ],
    ]);
    expect(issues({ ...base, moreValueColumns: [{ column: 'C', attribute: 'Water' }] })).toEqual([
      [
        'valueAttribute',
        'Name the attribute of the value column as well as those of the further value columns.',
      ],
    ]);
    expect(
      issues({
        ...base,
        valueAttribute: 'Assay',
        moreValueColumns: [
          { column: 'C', attribute: 'Water' },
          { column: 'D', attribute: ' assay' },
        ],
      }),
    ).toEqual([
      [
        'moreValueColumns.1.attribute',
        'The attribute "assay" is already given to another value column; each attribute has one column.',
      ],
    ]);
    expect(issues({ ...base, moreValueColumns: [] })[0]?.[0]).toBe('moreValueColumns');
  });
});

describe('seriesFromGrid without attributes', () => {
  it('reads censored value cells in a one-attribute sheet, and adds no attribute', () => {
    const sheet: SheetGrid = {
      name: 'Sheet1',
      rows: [
        ['Month', 'Impurity B'],
        [0, '<LOQ'],
        [3, 0.05],
        [6, 0.09],
      ],
    };
    const result = seriesFromGrid(
      [sheet],
      mapping({ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Impurity B' }),
    );
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.series).toHaveLength(1);
    expect(Object.keys(result.series[0]!)).toEqual(['id', 'observations', 'timeUnit', 'valueUnit']);
    expect(result.series[0]!.observations[0]).toEqual({
      censored: { text: '<LOQ' },
      source: { cell: 'Sheet1!B2', row: 2 },
      time: 0,
      value: 0,
    });
  });
});
