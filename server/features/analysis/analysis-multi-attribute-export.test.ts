import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { analysisCsv } from './analysis-export.ts';
import { fixtureRun, workbookBytes, workbookCells } from './analysis-run-fixture.ts';

type Sheet = [name: string, rows: [value: unknown, format: unknown][][]];

/** A sheet's rows as plain cell values. */
function values(sheets: Sheet[], name: string): unknown[][] {
  const sheet = sheets.find(([sheetName]) => sheetName === name);
  if (!sheet) throw new Error(`no sheet ${name}`);
  return sheet[1].map((row) => row.map(([value]) => value));
}

describe('the exports of a run of several attributes', () => {
  const run = fixtureRun(true);

  it('lists every attribute’s results in the CSV, each row naming its attribute', () => {
    const rows = parse(analysisCsv(run).replace(/^\uFEFF/, ''), { columns: true }) as Record<
      string,
      string
    >[];
    expect(Object.keys(rows[0]!)[0]).toBe('attribute');
    expect(new Set(rows.map((row) => row.attribute))).toEqual(new Set(['Assay', 'Impurity B']));
    const impurityK = rows.find(
      (row) => row.attribute === 'Impurity B' && row.section === 'rate-law' && row.quantity === 'k',
    );
    expect(impurityK?.seriesId).toMatch(/^Impurity B · FX-0\d @ 25 °C$/);
    // Each row's estimate is the stored one, at full precision.
    const stored = run.result.otherAttributes![0]!.analysis.series[0]!.analysis!.models[0]!.k;
    const first = rows.find(
      (row) => row.attribute === 'Impurity B' && row.key === `rate-law|Impurity B · FX-01 @ 25 °C|0|k`,
    );
    expect(Number(first!.estimate)).toBe(stored);
  });

  it('adds the sheets "Shelf life by attribute", "Other attributes" and "Mass balance"', async () => {
    const sheets = (await workbookCells(await workbookBytes(run))) as Sheet[];
    const names = sheets.map(([name]) => name);
    expect(names).toEqual([
      'About',
      'Results',
      'Data',
      'Fits',
      'Linearised',
      'Verdicts',
      'Arrhenius and Q1E',
      'Shelf-life proposal',
      'Shelf life by attribute',
      'Other attributes',
      'Mass balance',
      'Mass balance statement',
      'Figure data',
      'Method statement',
    ]);
    const study = run.result.studyShelfLife!;
    const shelf = values(sheets, 'Shelf life by attribute');
    expect(shelf[0]).toContain('Attribute');
    const limiting = shelf
      .slice(1)
      .filter((row) => row[7] === 'yes')
      .map((row) => row[0]);
    expect(limiting).toEqual(study.limitingAttributes);
    const last = shelf.at(-1)!;
    expect(last[0]).toBe('Study (earliest of the attributes)');
    expect(last[4]).toBe(study.proposedShelfLifeMonths);
    expect(last[9]).toBe(study.statement);
    const others = values(sheets, 'Other attributes');
    expect(others.slice(1).every((row) => row[0] === 'Impurity B')).toBe(true);
    expect(others.length).toBeGreaterThan(10);
    const balance = values(sheets, 'Mass balance');
    expect(balance[1]).toEqual(['FX-01', 25, 0, 100.3, 0, 100.3, 100, -0.159, -0.21, -0.108, 0.95]);
    expect(values(sheets, 'Mass balance statement')[1]![0]).toBe(run.result.massBalance!.statement);
    // The data sheet keeps the cell's text of a result below a limit.
    const data = values(sheets, 'Data');
    const reportedAs = data[0]!.indexOf('Reported as');
    expect(reportedAs).toBe(7);
    expect(data.filter((row) => row[reportedAs] === '<LOQ')).toHaveLength(3);
    // The figure data covers the other attribute's figures too.
    const figureData = values(sheets, 'Figure data');
    expect(figureData.some((row) => row[0] === 'attribute-1-q1e-25')).toBe(true);
  });

  it('adds none of them for a run of one attribute', async () => {
    const sheets = (await workbookCells(await workbookBytes(fixtureRun(false)))) as Sheet[];
    const names = sheets.map(([name]) => name);
    expect(names).not.toContain('Shelf life by attribute');
    expect(names).not.toContain('Mass balance');
    expect(values(sheets, 'Data')[0]).not.toContain('Reported as');
    expect(
      Object.keys(
        (parse(analysisCsv(fixtureRun(false)).replace(/^\uFEFF/, ''), { columns: true }) as object[])[0]!,
      )[0],
    ).toBe('key');
  });
});
