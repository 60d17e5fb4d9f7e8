import { tidyNote } from './report-context-tables.ts';
import type { ReportTable, TableColumn } from './template-helpers.ts';

/**
 * Repeated sentences said once. A report lists many series whose statements differ only in
 * their numbers ("Only 3.5 % of the initial value has reacted…", "Only 4.1 % …"); printed per
 * series, the same sentence fills pages. Here a sentence that several series share is said once,
 * with each number that differs between them named by a capital letter (A, B, …), and each
 * series gives its values ("A = 3.5"). A number all of them share stays in the sentence.
 *
 * Throws nothing.
 *
 * Example: "Only 3.5 % of the initial value has reacted." for S1 and "Only 4.1 % …" for S2 give
 * the shared sentence "Only A % of the initial value has reacted" and the values "A = 3.5",
 * "A = 4.1".
 */

const NUMBER = /-?\d+(?:\.\d+)?/g;
const LETTERS = 'ABCDEFGH';

/** A sentence's shape: the sentence with every number replaced by one mark. */
const shapeOf = (sentence: string) => sentence.replace(NUMBER, '#');

interface Shape {
  /** The sentence with the differing numbers as letters, or null when too many differ. */
  template: string | null;
  /** Per use, in the order given: the values of the letters ("A = 3.5, B = 0.07"). */
  values: string[];
}

/** The shared form of sentences of one shape, or null when more numbers differ than there are letters. */
function sharedShape(sentences: readonly string[]): Shape {
  const numbers = sentences.map((sentence) => sentence.match(NUMBER) ?? []);
  const first = numbers[0] ?? [];
  const varying = first
    .map((_, index) => index)
    .filter((index) => numbers.some((own) => own[index] !== first[index]));
  if (varying.length > LETTERS.length) return { template: null, values: [] };
  let position = -1;
  const template = (sentences[0] ?? '').replace(NUMBER, (match) => {
    position += 1;
    const at = varying.indexOf(position);
    return at < 0 ? match : (LETTERS[at] as string);
  });
  return {
    template,
    values: numbers.map((own) => varying.map((index, at) => `${LETTERS[at]} = ${own[index]}`).join(', ')),
  };
}

const capitalised = (text: string) => text.charAt(0).toUpperCase() + text.slice(1);

/**
 * The warnings of an attribute's series with repeats said once: one sentence with the list of
 * series (and their values, when the sentences differ in numbers). Dataset warnings stay as they are.
 *
 * Example: "Only 3.5 % of the initial value has reacted" for S1 and "Only 4.1 % …" for S2 give
 * "Only A % of the initial value has reacted: S1 (A = 3.5), S2 (A = 4.1)."
 */
export function groupedWarnings(
  datasetWarnings: readonly string[],
  seriesWarnings: readonly { seriesId: string; message: string }[],
): string[] {
  const groups = new Map<string, { seriesId: string; message: string }[]>();
  for (const warning of seriesWarnings) {
    const key = shapeOf(warning.message);
    groups.set(key, [...(groups.get(key) ?? []), warning]);
  }
  const grouped = [...groups.values()].map((group) => {
    const first = group[0]!;
    if (group.length === 1) return `${first.seriesId}: ${first.message}`;
    const shape = sharedShape(group.map((entry) => entry.message.replace(/[.\s]+$/, '')));
    if (shape.template === null) return group.map((entry) => `${entry.seriesId}: ${entry.message}`).join(' ');
    const list = group.map((entry, index) =>
      shape.values[index] ? `${entry.seriesId} (${shape.values[index]})` : entry.seriesId,
    );
    return `${capitalised(shape.template)}: ${list.join(', ')}.`;
  });
  return [...datasetWarnings, ...grouped];
}

/**
 * A table of rows that each carry a statement in prose, with every sentence that two or more
 * rows share in shape said once, as a numbered note under the table: the cell keeps "[n]" and,
 * when the rows' sentences differ in numbers, its own values ("[1] A = 5.0, B = 0.0739").
 * Sentences of one row only stay in its cell. Sentences are split as `sharedStatementTable`
 * splits them (a full stop or semicolon, a space, a capital or digit).
 */
export function sharedShapeTable(
  caption: string,
  columns: TableColumn[],
  statementColumn: TableColumn,
  rows: { cells: Record<string, string>; statement: string }[],
): ReportTable {
  const sentencesOf = (statement: string) =>
    tidyNote(statement)
      .split(/(?<=[.;])\s+(?=[A-Z0-9])/)
      .map((sentence) => sentence.trim())
      .filter(Boolean);
  const perRow = rows.map((row) => sentencesOf(row.statement));
  const byShape = new Map<string, { row: number; sentence: string }[]>();
  perRow.forEach((sentences, row) => {
    for (const sentence of sentences) {
      const key = shapeOf(sentence);
      byShape.set(key, [...(byShape.get(key) ?? []), { row, sentence }]);
    }
  });
  const shapes = new Map<string, Shape & { uses: { row: number; sentence: string }[] }>();
  for (const [key, uses] of byShape)
    if (new Set(uses.map((use) => use.row)).size > 1) {
      const shape = sharedShape(uses.map((use) => use.sentence));
      if (shape.template !== null) shapes.set(key, { ...shape, uses });
    }
  const numbers = new Map<string, number>();
  const notes: string[] = [];
  const tableRows = rows.map((row, index) => {
    const parts = (perRow[index] ?? []).map((sentence) => {
      const key = shapeOf(sentence);
      const shape = shapes.get(key);
      if (!shape) return sentence;
      if (!numbers.has(key)) {
        notes.push(shape.template!);
        numbers.set(key, notes.length);
      }
      const use = shape.uses.findIndex((entry) => entry.row === index && entry.sentence === sentence);
      const values = shape.values[use] ?? '';
      return `[${numbers.get(key)}]${values ? ` ${values}` : ''}`;
    });
    return { ...row.cells, [statementColumn.key]: parts.join(' ') };
  });
  return {
    caption,
    columns: [...columns, statementColumn],
    rows: tableRows,
    ...(notes.length > 0 ? { notes } : {}),
  };
}

/**
 * A table's numbered notes with repeats in shape said once: notes that differ only in numbers
 * ("the fitted initial value 100.5 is …", "… 100.6 is …") become one note with letters, and
 * each cell's marker carries its values ("[1] A = 100.5"). Notes are renumbered in order; a
 * table without notes is returned as it is.
 */
export function mergedNotes(table: ReportTable): ReportTable {
  const notes = table.notes ?? [];
  if (notes.length < 2) return table;
  const groups = new Map<string, number[]>();
  notes.forEach((note, index) => {
    const key = shapeOf(note);
    groups.set(key, [...(groups.get(key) ?? []), index]);
  });
  const merged: string[] = [];
  const markerOf = new Map<number, string>();
  const numberOf = new Map<string, number>();
  notes.forEach((note, index) => {
    const key = shapeOf(note);
    const members = groups.get(key) ?? [index];
    const shape = members.length > 1 ? sharedShape(members.map((member) => notes[member]!)) : null;
    const template = shape?.template ?? null;
    const groupKey = template === null ? `#${index}` : key;
    if (!numberOf.has(groupKey)) {
      merged.push(template ?? note);
      numberOf.set(groupKey, merged.length);
    }
    const values = template === null ? '' : (shape?.values[members.indexOf(index)] ?? '');
    markerOf.set(index + 1, `[${numberOf.get(groupKey)}]${values ? ` ${values}` : ''}`);
  });
  if (merged.length === notes.length) return table;
  return {
    ...table,
    rows: table.rows.map((row) =>
      Object.fromEntries(
        Object.entries(row).map(([key, cell]) => [
          key,
          cell.replace(/\[(\d+)\]/g, (match, number) => markerOf.get(Number(number)) ?? match),
        ]),
      ),
    ),
    notes: merged,
  };
}

/**
 * A list table whose `key` column repeats the same text in several rows ("Two points define the
 * line exactly; …" under every Arrhenius quantity): the repeated text becomes a numbered note
 * under the table and the cells say "[n]"; text of one row stays. Existing notes keep their numbers.
 */
export function repeatedCellsAsNotes(table: ReportTable, key: string): ReportTable {
  const uses = new Map<string, number>();
  for (const row of table.rows) {
    const cell = row[key] ?? '';
    if (cell !== '') uses.set(cell, (uses.get(cell) ?? 0) + 1);
  }
  const notes = [...(table.notes ?? [])];
  const numberOf = new Map<string, number>();
  const rows = table.rows.map((row) => {
    const cell = row[key] ?? '';
    if ((uses.get(cell) ?? 0) < 2) return row;
    if (!numberOf.has(cell)) {
      notes.push(cell);
      numberOf.set(cell, notes.length);
    }
    return { ...row, [key]: `[${numberOf.get(cell)}]` };
  });
  return numberOf.size === 0 ? table : { ...table, rows, notes };
}
