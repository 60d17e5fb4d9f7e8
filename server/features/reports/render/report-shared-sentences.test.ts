import { describe, expect, it } from 'vitest';
import {
  groupedWarnings,
  mergedNotes,
  repeatedCellsAsNotes,
  sharedShapeTable,
} from './report-shared-sentences.ts';

describe('repeated sentences said once', () => {
  it('groups warnings that differ only in numbers, naming the numbers that differ', () => {
    expect(
      groupedWarnings(
        ['Dataset warning.'],
        [
          { seriesId: 'S1', message: 'Only 3.5 % of the initial value has reacted; order unknown.' },
          { seriesId: 'S2', message: 'Only 4.1 % of the initial value has reacted; order unknown.' },
          { seriesId: 'S2', message: 'the law is extrapolated beyond 0 to 6 month.' },
          { seriesId: 'S3', message: 'the law is extrapolated beyond 0 to 6 month.' },
          { seriesId: 'S3', message: 'A warning of its own.' },
        ],
      ),
    ).toEqual([
      'Dataset warning.',
      'Only A % of the initial value has reacted; order unknown: S1 (A = 3.5), S2 (A = 4.1).',
      'The law is extrapolated beyond 0 to 6 month: S2, S3.',
      'S3: A warning of its own.',
    ]);
  });

  it('keeps warnings whose words differ apart (only numbers may differ)', () => {
    const warnings = groupedWarnings(
      [],
      [
        { seriesId: 'S1', message: 'zero-order and first-order curves differ by 0.1.' },
        { seriesId: 'S2', message: 'second-order and first-order curves differ by 0.2.' },
      ],
    );
    expect(warnings).toEqual([
      'S1: zero-order and first-order curves differ by 0.1.',
      'S2: second-order and first-order curves differ by 0.2.',
    ]);
  });

  it('turns statements of one shape into one note, each row keeping its own values', () => {
    const table = sharedShapeTable(
      'Basis',
      [{ key: 'where', label: 'Series' }],
      { key: 'basis', label: 'Basis' },
      [
        {
          cells: { where: 'S1' },
          statement: 'Only 5.0 % reacted (0.07 half-lives); at least 30 % is needed. Fixed by the analyst.',
        },
        {
          cells: { where: 'S2' },
          statement: 'Only 6.0 % reacted (0.09 half-lives); at least 30 % is needed. Fixed by the analyst.',
        },
        { cells: { where: 'S3' }, statement: 'Enough has reacted.' },
      ],
    );
    expect(table.notes).toEqual([
      'Only A % reacted (B half-lives); at least 30 % is needed.',
      'Fixed by the analyst.',
    ]);
    expect(table.rows).toEqual([
      { where: 'S1', basis: '[1] A = 5.0, B = 0.07 [2]' },
      { where: 'S2', basis: '[1] A = 6.0, B = 0.09 [2]' },
      { where: 'S3', basis: 'Enough has reacted.' },
    ]);
  });

  it('leaves a table without shared statements as it was', () => {
    const table = sharedShapeTable('Basis', [], { key: 'basis', label: 'Basis' }, [
      { cells: {}, statement: 'One.' },
      { cells: {}, statement: 'Two words.' },
    ]);
    expect(table).toEqual({
      caption: 'Basis',
      columns: [{ key: 'basis', label: 'Basis' }],
      rows: [{ basis: 'One.' }, { basis: 'Two words.' }],
    });
  });

  it("merges a table's notes that differ only in numbers and renumbers the cells' markers", () => {
    const table = mergedNotes({
      caption: 'Times',
      columns: [{ key: 'a', label: 'A' }],
      rows: [{ a: 'not estimable [1]' }, { a: '12 month [2] [3]' }, { a: 'not estimable [4]' }],
      notes: [
        'the fitted initial value 100.5 is already at the level 105',
        'beyond the observed time',
        'the fitted initial value 100.6 is already at the level 105',
        'the fitted initial value 99.9 is already at the level 105',
      ],
    });
    expect(table.notes).toEqual([
      'the fitted initial value A is already at the level 105',
      'beyond the observed time',
    ]);
    expect(table.rows).toEqual([
      { a: 'not estimable [1] A = 100.5' },
      { a: '12 month [2] [1] A = 100.6' },
      { a: 'not estimable [1] A = 99.9' },
    ]);
    const plain = { caption: 'x', columns: [], rows: [], notes: ['one', 'two'] };
    expect(mergedNotes(plain)).toBe(plain);
  });

  it('says a note several rows of a list table repeat once under it', () => {
    const table = repeatedCellsAsNotes(
      {
        caption: 'Arrhenius',
        columns: [
          { key: 'q', label: 'Quantity' },
          { key: 'note', label: 'Note' },
        ],
        rows: [
          { q: 'Ea', note: 'Two points define the line.' },
          { q: 'ln A', note: '' },
          { q: 'R²', note: 'Two points define the line.' },
          { q: 'k', note: 'one series' },
        ],
        notes: ['an earlier note'],
      },
      'note',
    );
    expect(table.rows.map((row) => row.note)).toEqual(['[2]', '', '[2]', 'one series']);
    expect(table.notes).toEqual(['an earlier note', 'Two points define the line.']);
    const unique = { caption: 'x', columns: [], rows: [{ note: 'a' }, { note: 'b' }] };
    expect(repeatedCellsAsNotes(unique, 'note')).toBe(unique);
  });
});
