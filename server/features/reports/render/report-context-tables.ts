import { FORMATION_ORDER_WHY, isFormationRate } from '../../../../shared/figures/arrhenius-rate-words.ts';
import { MODEL_NAMES, type ResultRow, resultRows } from '../../../../shared/figures/results-table.ts';
import { inTimeUnit } from '../../../../shared/figures/time-unit-words.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import { interval, significant } from './template-format.ts';
import type { ReportTable, TableColumn } from './template-helpers.ts';

/**
 * The tables of a report, as `ReportTable` objects of pre-formatted text (the `table` helper
 * escapes and prints them): the results, one per section of `resultRows` — the same rows, with
 * the same significant figures, as the analysis screen and the exported workbook. The measured
 * data of each series are `report-data-tables.ts`.
 *
 * Throws nothing.
 *
 * Example: a first-order series with k = 6.213e-4 1/s gives, in the "Rate laws" table, a row
 * whose Estimate cell is "6.213 × 10⁻⁴ 1/s".
 */

const where = (row: ResultRow) =>
  row.seriesId ?? (row.temperatureC === null ? 'All series' : `${row.temperatureC} °C`);

function modelName(row: ResultRow): string {
  if (row.model === null) return '';
  return MODEL_NAMES[row.model] ?? row.model;
}

const intervalLabel = (analysis: DatasetAnalysis) =>
  `${Math.round(analysis.confidenceLevel * 100)} % interval`;

/** Engine prose quotes some numbers at full double precision; a report shows them at 4 significant figures. */
const LONG_DECIMAL = /-?\d+\.\d{6,}/g;
export const tidyNote = (note: string) =>
  note.replace(LONG_DECIMAL, (match) => significant(Number(match), 4));

/** A table with one row per result row (Q1E, Arrhenius, derived times). */
function listTable(analysis: DatasetAnalysis, rows: ResultRow[], caption: string): ReportTable {
  const hasInterval = rows.some((row) => row.lower !== null);
  return {
    caption,
    columns: [
      { key: 'where', label: 'Series / condition' },
      { key: 'quantity', label: 'Quantity' },
      { key: 'estimate', label: 'Estimate', align: 'right' },
      ...(hasInterval ? [{ key: 'interval', label: intervalLabel(analysis), align: 'right' as const }] : []),
      { key: 'note', label: 'Note' },
    ],
    rows: rows.map((row) => ({
      where: where(row),
      quantity: row.label,
      estimate: significant(row.estimate, row.digits, row.unit),
      interval:
        row.lower === null || row.upper === null
          ? ''
          : interval([row.lower, row.upper], row.digits, row.unit),
      // A shelf-life row's unit is the study's time unit: its note says "month", not "time units".
      note: row.section === 'shelf-life' ? inTimeUnit(tidyNote(row.note), row.unit) : tidyNote(row.note),
    })),
  };
}

/**
 * The numbered notes under a table: `cells` are the statements of each cell, `toNote` says
 * whether a statement (used by `uses` cells) is said once under the table rather than in its
 * cell. `place` splits one cell's statements into the "[n]" markers of its notes and the ones
 * it keeps; notes are numbered in the order cells are placed.
 */
function tableNotes(cells: readonly string[][], toNote: (statement: string, uses: number) => boolean) {
  const uses = new Map<string, number>();
  for (const statements of cells)
    for (const statement of new Set(statements)) uses.set(statement, (uses.get(statement) ?? 0) + 1);
  const numbers = new Map<string, number>();
  const place = (statements: readonly string[]) => {
    const markers: string[] = [];
    const own: string[] = [];
    for (const statement of statements) {
      if (!toNote(statement, uses.get(statement) ?? 0)) {
        own.push(statement);
        continue;
      }
      if (!numbers.has(statement)) numbers.set(statement, numbers.size + 1);
      markers.push(`[${numbers.get(statement)}]`);
    }
    return { markers, own };
  };
  return { place, notes: () => [...numbers.keys()] };
}

/** The longest statement a cell of a wide table keeps in itself; longer ones become notes. */
const INLINE_NOTE_CHARACTERS = 40;

/** A quantity shown as a column of a wide table. */
interface WideColumn {
  quantity: string;
  label: string;
}

/**
 * One row per group of result rows (a series, or a series and a law) and one column per
 * quantity, each cell the estimate with its interval below it. A statement that two or more
 * cells share ("beyond the observed time (extrapolated)", the model-averaging method) is said
 * once, as a numbered note under the table, and the cells refer to it as "[n]"; so is a long
 * statement of one cell (over `INLINE_NOTE_CHARACTERS`), so that the columns stay narrow enough
 * for the page; a short one stays in its cell. The interval below an estimate omits the unit the
 * estimate line states. Same numbers and significant figures as `listTable`.
 */
function wideTable(
  analysis: DatasetAnalysis,
  rows: ResultRow[],
  options: {
    caption: string;
    groupKey: (row: ResultRow) => string;
    leading: TableColumn[];
    leadingCells: (row: ResultRow) => Record<string, string>;
    quantities: WideColumn[];
    notePart?: (row: ResultRow, part: string) => string;
  },
): ReportTable {
  const groups = new Map<string, ResultRow[]>();
  for (const row of rows) {
    const key = options.groupKey(row);
    const group = groups.get(key);
    if (group) group.push(row);
    else groups.set(key, [row]);
  }
  const quantities = options.quantities.filter((column) =>
    rows.some((row) => row.quantity === column.quantity),
  );
  const partsOf = (row: ResultRow) =>
    tidyNote(row.note)
      .split('; ')
      .map((part) => (options.notePart ? options.notePart(row, part) : part).trim())
      .filter(Boolean);
  const footnotes = tableNotes(
    rows.map(partsOf),
    (part, uses) => uses > 1 || part.length > INLINE_NOTE_CHARACTERS,
  );
  const cellText = (row: ResultRow | undefined) => {
    if (!row) return '—';
    const { markers, own } = footnotes.place(partsOf(row));
    const estimate = [significant(row.estimate, row.digits, row.unit), ...markers].join(' ');
    const range =
      row.lower === null || row.upper === null ? '' : interval([row.lower, row.upper], row.digits);
    return [estimate, range, ...own].filter(Boolean).join('\n');
  };
  const tableRows = [...groups.values()].map((group) => {
    const cells: Record<string, string> = options.leadingCells(group[0]!);
    for (const column of quantities)
      cells[column.quantity] = cellText(group.find((row) => row.quantity === column.quantity));
    return cells;
  });
  const notes = footnotes.notes();
  return {
    caption: `${options.caption} (${intervalLabel(analysis)} below each estimate)`,
    columns: [
      ...options.leading,
      ...quantities.map((column) => ({ key: column.quantity, label: column.label, align: 'right' as const })),
    ],
    rows: tableRows,
    ...(notes.length > 0 ? { notes } : {}),
  };
}

const TIME_COLUMNS: WideColumn[] = [
  { quantity: 'half-life', label: 'Half-life' },
  { quantity: 't90', label: 't90 (10 % loss)' },
  { quantity: 'time-to-lower-limit', label: 'Time to the lower limit' },
  { quantity: 'time-to-upper-limit', label: 'Time to the upper limit' },
];

/** Half-life, t90 and time to each limit of the reported order: one row per series. */
function derivedTable(analysis: DatasetAnalysis, rows: ResultRow[]): ReportTable {
  return wideTable(analysis, rows, {
    caption: 'Half-life, t90 and time to the limits (reported order)',
    groupKey: where,
    leading: [
      { key: 'where', label: 'Series / condition' },
      { key: 'law', label: 'Order' },
    ],
    leadingCells: (row) => ({ where: where(row), law: modelName(row) }),
    quantities: TIME_COLUMNS,
  });
}

/**
 * The plausible laws of each series whose order the data do not name, one row per law, and the
 * model-averaged times in a row of their own; k is never averaged (its units differ by order).
 */
function plausibleTable(analysis: DatasetAnalysis, rows: ResultRow[]): ReportTable {
  return wideTable(analysis, rows, {
    caption:
      'Series whose order the data do not name: each plausible law (Akaike weight ≥ 0.1 or ΔAICc ≤ 2) and the model-averaged t90 and time to a limit with the unconditional interval (Burnham & Anderson 2002, §4.3); k is never averaged',
    groupKey: (row) => `${where(row)}|${row.model}`,
    leading: [
      { key: 'where', label: 'Series / condition' },
      { key: 'law', label: 'Law' },
    ],
    leadingCells: (row) => ({
      where: where(row),
      law: row.model === 'average' ? 'model average' : modelName(row),
    }),
    quantities: [{ quantity: 'k', label: 'Rate constant k' }, ...TIME_COLUMNS],
    // The caption says each law is plausible; the cell keeps its weight and ΔAICc.
    notePart: (row, part) => (row.quantity === 'k' ? part.replace(/^plausible law: /, '') : part),
  });
}

/** One row per series and rate law: k with its interval, C0, AICc and Akaike weight. */
function modelTable(analysis: DatasetAnalysis, rows: ResultRow[]): ReportTable {
  const groups = new Map<string, Map<string, ResultRow>>();
  for (const row of rows) {
    const key = `${row.seriesId}|${row.model}`;
    const group = groups.get(key) ?? new Map<string, ResultRow>();
    group.set(row.quantity, row);
    groups.set(key, group);
  }
  const text = (row: ResultRow | undefined) => (row ? significant(row.estimate, row.digits, row.unit) : '');
  return {
    caption: 'Rate-law fits compared (AICc: lower is better; weights sum to 1 per series)',
    columns: [
      { key: 'where', label: 'Series' },
      { key: 'model', label: 'Law' },
      { key: 'k', label: 'Rate constant k', align: 'right' },
      { key: 'interval', label: intervalLabel(analysis), align: 'right' },
      { key: 'aicc', label: 'AICc', align: 'right' },
      { key: 'weight', label: 'Weight', align: 'right' },
      { key: 'note', label: 'Note' },
    ],
    rows: [...groups.values()].map((group) => {
      const k = group.get('k') as ResultRow;
      return {
        where: where(k),
        model: modelName(k) + (group.has('n') ? ` (n = ${text(group.get('n'))})` : ''),
        k: text(k),
        interval: k.lower === null || k.upper === null ? '' : interval([k.lower, k.upper], k.digits),
        aicc: text(group.get('aicc')),
        weight: text(group.get('weight')),
        note: k.note,
      };
    }),
  };
}

/** One row per series: R² of the three straight-line plots. */
function linearisedTable(rows: ResultRow[]): ReportTable {
  const bySeries = new Map<string, Record<string, string>>();
  for (const row of rows) {
    const entry = bySeries.get(where(row)) ?? { where: where(row) };
    entry[row.model ?? ''] = significant(row.estimate, row.digits);
    bySeries.set(where(row), entry);
  }
  return {
    caption: 'Straight-line plots: R² against time (for reference only; they do not decide the order)',
    columns: [
      { key: 'where', label: 'Series' },
      { key: 'value', label: 'value', align: 'right' },
      { key: 'ln(value)', label: 'ln(value)', align: 'right' },
      { key: '1/value', label: '1/value', align: 'right' },
    ],
    rows: [...bySeries.values()],
  };
}

/**
 * One row per condition: its declared role, the statistical estimate, the ICH Q1E extrapolation
 * limit with its rule and section, and the proposed shelf life (or why there is none). Runs
 * recorded before proposals have none, and the table is left out.
 */
function proposalTable(analysis: DatasetAnalysis): ReportTable | null {
  const conditions = (analysis.shelfLife ?? []).filter((condition) => condition.proposal !== undefined);
  if (conditions.length === 0) return null;
  const unitOf = (seriesIds: string[]) =>
    analysis.series.find((result) => seriesIds.includes(result.id))?.analysis?.timeUnit ?? '';
  const months = (value: number | null) => (value === null ? '—' : `${Number(value.toPrecision(6))} months`);
  return {
    caption:
      'Proposed shelf life: the smaller of the estimate and the ICH Q1E extrapolation limit, rounded down to a whole month',
    columns: [
      { key: 'where', label: 'Condition' },
      { key: 'role', label: 'Role' },
      { key: 'estimate', label: 'Statistical estimate', align: 'right' },
      { key: 'limit', label: 'Extrapolation limit', align: 'right' },
      { key: 'proposed', label: 'Proposed', align: 'right' },
      { key: 'basis', label: 'Rule and branch, or why none' },
    ],
    rows: conditions.map((condition) => {
      const proposal = condition.proposal;
      const limit = proposal.extrapolationLimit;
      return {
        where: condition.temperatureC === null ? 'All series' : `${condition.temperatureC} °C`,
        role: condition.role === 'not-declared' ? 'not declared' : condition.role,
        estimate: significant(condition.result?.shelfLife ?? null, 4, unitOf(condition.seriesIds)),
        limit: months(limit.valueMonths),
        proposed: months(proposal.proposedShelfLifeMonths),
        basis: tidyNote(
          proposal.proposedReason ??
            `${limit.rule} (${limit.section ?? 'ICH Q1E'}); ${limit.branchText}${limit.assumptions.length > 0 ? `. Assumptions: ${limit.assumptions.join(' ')}` : ''}`,
        ),
      };
    }),
  };
}

/** Which order the Arrhenius rate constants are of, and why, in the caption's words. */
const ARRHENIUS_ORDER_WHY: Record<string, string> = {
  analyst: 'rate constants of the order fixed by the analyst',
  study: 'rate constants of the study’s working order, as no series named an order',
  data: 'rate constants of the order with the lowest summed AICc over the series',
  formation: `formation rates k_f, ${FORMATION_ORDER_WHY}`,
};

/** The caption of the Arrhenius table: what its rates are, and why they are of their order. */
function arrheniusCaption(analysis: DatasetAnalysis): string {
  const arrhenius = analysis.arrhenius;
  if (isFormationRate(arrhenius) && arrhenius?.orderSource !== 'formation')
    // An analyst's zero order on an increasing attribute: still its formation rate.
    return `Temperature dependence (Arrhenius; Eyring ΔH‡ and ΔS‡ through the same formation rates): formation rates k_f of the zero order fixed by the analyst`;
  return `Temperature dependence (Arrhenius; Eyring ΔH‡ and ΔS‡ through the same ${isFormationRate(arrhenius) ? 'formation rates' : 'rate constants'}): ${ARRHENIUS_ORDER_WHY[String(arrhenius?.orderSource)] ?? 'order of the analysis'}`;
}

/** The results tables by the part of the report they belong to, each in reading order. */
export interface ResultTableGroups {
  /** The proposed shelf life per condition and the ICH Q1E statistical estimates. */
  shelfLife: ReportTable[];
  /** Arrhenius (and Eyring) over the temperatures of the data. */
  temperature: ReportTable[];
  /** Per series: derived times, plausible laws, the rate-law comparison, the straight-line plots. */
  series: ReportTable[];
}

/** The results tables, from `resultRows` (the screen's rows and figures), grouped by report part. */
export function resultTableGroups(analysis: DatasetAnalysis): ResultTableGroups {
  const rows = resultRows(analysis);
  const of = (section: ResultRow['section']) => rows.filter((row) => row.section === section);
  const groups: ResultTableGroups = { shelfLife: [], temperature: [], series: [] };
  const proposals = proposalTable(analysis);
  if (proposals) groups.shelfLife.push(proposals);
  if (of('shelf-life').length > 0)
    groups.shelfLife.push(
      listTable(analysis, of('shelf-life'), 'ICH Q1E statistical shelf-life estimate per condition'),
    );
  if (of('arrhenius').length > 0)
    groups.temperature.push(listTable(analysis, of('arrhenius'), arrheniusCaption(analysis)));
  if (of('derived').length > 0) groups.series.push(derivedTable(analysis, of('derived')));
  if (of('plausible').length > 0) groups.series.push(plausibleTable(analysis, of('plausible')));
  if (of('rate-law').length > 0) groups.series.push(modelTable(analysis, of('rate-law')));
  if (of('linearised').length > 0) groups.series.push(linearisedTable(of('linearised')));
  return groups;
}

/** The grouped results tables as one list, in reading order. */
export function allResultTables(groups: ResultTableGroups): ReportTable[] {
  return [...groups.shelfLife, ...groups.temperature, ...groups.series];
}

/** The results tables, from `resultRows` (the screen's rows and figures), in reading order. */
export function resultTables(analysis: DatasetAnalysis): ReportTable[] {
  return allResultTables(resultTableGroups(analysis));
}

/**
 * A table of rows that each carry a statement in prose (a series' verdict, say), with every
 * sentence that two or more rows share said once, as a numbered note under the table, and
 * referred to from the row as "[n]"; sentences of one row only stay in its cell. Sentences are
 * split at a full stop or semicolon followed by a space and a capital letter or digit, so that a
 * decimal point ("0.219 half-lives") never splits one. Repeated statements become one sentence
 * with a list, not a paragraph per row.
 *
 * Example: two rows "Order not identified: 4 % reacted. Fixed by the analyst." and "Order not
 * identified: 6 % reacted. Fixed by the analyst." give cells "Order not identified: 4 % reacted.
 * [1]" and "… 6 % reacted. [1]" and the note "Fixed by the analyst.".
 */
export function sharedStatementTable(
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
  const footnotes = tableNotes(
    rows.map((row) => sentencesOf(row.statement)),
    (_sentence, uses) => uses > 1,
  );
  const tableRows = rows.map((row) => {
    const { markers, own } = footnotes.place(sentencesOf(row.statement));
    return { ...row.cells, [statementColumn.key]: [...own, ...markers].join(' ') };
  });
  const notes = footnotes.notes();
  return {
    caption,
    columns: [...columns, statementColumn],
    rows: tableRows,
    ...(notes.length > 0 ? { notes } : {}),
  };
}
