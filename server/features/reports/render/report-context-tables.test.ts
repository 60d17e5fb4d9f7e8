import { describe, expect, it } from 'vitest';
import { reportFixture } from './render-fixture.ts';
import { reportFigures } from './render-report.ts';
import { resultTableGroups, resultTables, sharedStatementTable } from './report-context-tables.ts';

describe('sharedStatementTable (issue 15 §2: repeated statements said once)', () => {
  const table = sharedStatementTable(
    'Series',
    [{ key: 'where', label: 'Series' }],
    { key: 'basis', label: 'Basis' },
    [
      { cells: { where: 'A' }, statement: 'Order not identified: 4.1 % reacted. Fixed by the analyst.' },
      { cells: { where: 'B' }, statement: 'Order not identified: 6.2 % reacted. Fixed by the analyst.' },
      { cells: { where: 'C' }, statement: 'First order named; 0.219 half-lives observed.' },
    ],
  );

  it('says a sentence two rows share once, as a note the rows refer to', () => {
    expect(table.notes).toEqual(['Fixed by the analyst.']);
    expect(table.rows[0]!.basis).toBe('Order not identified: 4.1 % reacted. [1]');
    expect(table.rows[1]!.basis).toBe('Order not identified: 6.2 % reacted. [1]');
  });

  it('keeps a sentence of one row in its cell, and never splits at a decimal point', () => {
    expect(table.rows[2]!.basis).toBe('First order named; 0.219 half-lives observed.');
  });
});

describe('resultTableGroups', () => {
  const { stored, context } = reportFixture();
  const analysis = 'analysis' in stored ? stored.analysis : stored;

  it('holds the same tables as the flat list, in reading order', () => {
    const groups = resultTableGroups(analysis);
    expect([...groups.shelfLife, ...groups.temperature, ...groups.series].map((t) => t.caption)).toEqual(
      resultTables(analysis).map((t) => t.caption),
    );
    expect(groups.shelfLife.length).toBeGreaterThan(0);
    expect(context.tables.series.length).toBeGreaterThan(0);
  });

  it('gives the derived times one row per series (not one row per quantity)', () => {
    const derived = resultTableGroups(analysis).series.find((t) => t.caption.startsWith('Half-life, t90'))!;
    const seriesIds = analysis.series.filter((s) => s.analysis?.reportedOrder != null).map((s) => s.id);
    expect(derived.rows.map((row) => row.where)).toEqual(seriesIds);
    expect(derived.columns.map((c) => c.label)).toContain('t90 (10 % loss)');
  });

  it('numbers the figures as the report reads them: Q1E, Arrhenius, then the series', () => {
    const ids = reportFigures(context.figures).map((figure) => figure.id);
    const rank = (id: string) => (id.startsWith('q1e-') ? 0 : id === 'arrhenius' ? 1 : 2);
    expect(ids.map(rank)).toEqual([...ids.map(rank)].sort());
    expect(context.figureGroups.series.every((figure) => figure.id.startsWith('series-'))).toBe(true);
  });
});
