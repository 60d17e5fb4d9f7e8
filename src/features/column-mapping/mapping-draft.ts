/**
 * The mapping form's state and its translation into a column mapping, kept pure so it can be
 * tested and reused: the island validates the draft with the same `columnMappingSchema` the server
 * uses, and shows each problem beside its field.
 *
 * Columns are offered by header text when the header is unique and not itself a column letter
 * (so a saved mapping still fits when columns move), and by letter otherwise.
 *
 * For a study of several attributes the draft also holds the sheet's layout and each value
 * column's attribute (`attribute-draft.ts`); for a study of one it names none, as before.
 */
import type { SheetPreview } from '../../../shared/api/uploads.ts';
import { columnIndex, columnLetter } from '../../../shared/intake/cell-reference.ts';
import { type ColumnMapping, columnMappingSchema } from '../../../shared/intake/column-mapping.ts';
import { timeUnitFromHeader, valueUnitForStudy } from '../../../shared/intake/unit-from-header.ts';
import {
  type AttributeChoice,
  type AttributeDraft,
  attributeColumnFields,
  attributeDraftErrors,
  attributeDraftFromMapping,
  attributeFieldLabel,
  attributeMappingInput,
  guessAttributeDraft,
} from './attribute-draft.ts';

export interface MappingDraft extends AttributeDraft {
  sheet: string;
  headerRow: string;
  timeColumn: string;
  timeFormat: 'elapsed' | 'datetime';
  timeUnit: string;
  valueColumn: string;
  valueUnit: string;
  seriesColumn: string;
  temperatureColumn: string;
  temperatureUnit: 'C' | 'K';
  replicateColumn: string;
}

export interface ColumnOption {
  value: string;
  label: string;
}

/** Header texts of a previewed sheet at a 1-based row, merged headers filled in. */
export function previewHeaders(sheet: SheetPreview, headerRow: number): string[] {
  if (headerRow < 1) return [];
  const texts = (sheet.rows[headerRow - 1] ?? []).map((cell) => cell.text.trim());
  for (const range of sheet.merges) {
    const match = /^([A-Z]+)(\d+):([A-Z]+)(\d+)$/.exec(range);
    if (!match) continue;
    const [, left, top, , bottom] = match as unknown as [string, string, string, string, string];
    const column = columnIndex(left);
    if (Number(top) <= headerRow && headerRow <= Number(bottom) && (texts[column] ?? '') === '') {
      texts[column] = sheet.rows[Number(top) - 1]?.[column]?.text.trim() ?? '';
    }
  }
  return texts;
}

export function columnOptions(sheet: SheetPreview, headerRow: number): ColumnOption[] {
  const headers = previewHeaders(sheet, headerRow);
  const count = (text: string) =>
    headers.filter((header) => header.toLowerCase() === text.toLowerCase()).length;
  return Array.from({ length: sheet.columnCount }, (_, index) => {
    const letter = columnLetter(index);
    const header = headers[index] ?? '';
    const byName = header !== '' && count(header) === 1 && !/^[A-Za-z]{1,3}$/.test(header);
    return {
      value: byName ? header : letter,
      label: header === '' ? `Column ${letter}` : `${letter} · ${header}`,
    };
  });
}

const PATTERNS = {
  time: /time|month|week|day|hour|\bh\b|date|monat|tag|zeit|zeitpunkt|mois|jour/i,
  value: /assay|value|content|result|gehalt|impurit|conc|%|teneur|potency/i,
  series: /batch|lot|charge|series/i,
  temperature: /temp|°c|lagerung/i,
  replicate: /replicate|rep\b|repl|aliquot|injection/i,
};

/** A first guess from the header texts; the analyst checks and corrects it. */
export function guessDraft(
  sheet: SheetPreview,
  valueUnit: string,
  attributes: readonly AttributeChoice[] = [],
): MappingDraft {
  const headerRow = sheet.headerGuess;
  const options = columnOptions(sheet, headerRow);
  const headers = previewHeaders(sheet, headerRow);
  const taken = new Set<string>();
  const find = (pattern: RegExp) => {
    const index = headers.findIndex(
      (header, column) => pattern.test(header) && !taken.has(options[column]!.value),
    );
    if (index < 0) return '';
    taken.add(options[index]!.value);
    return options[index]!.value;
  };
  const seriesColumn = find(PATTERNS.series);
  const temperatureColumn = find(PATTERNS.temperature);
  const replicateColumn = find(PATTERNS.replicate);
  const timeColumn = find(PATTERNS.time);
  const valueColumn = find(PATTERNS.value);
  const timeIndex = options.findIndex((option) => option.value === timeColumn);
  const firstData = sheet.rows[headerRow]?.[timeIndex];
  const timeHeader = headers[timeIndex] ?? '';
  const valueHeader = headers[options.findIndex((option) => option.value === valueColumn)] ?? '';
  const attributeDraft = guessAttributeDraft(
    headers,
    options.map((option) => option.value),
    valueColumn,
    attributes,
    taken,
  );
  return {
    ...attributeDraft,
    sheet: sheet.name,
    headerRow: String(headerRow),
    timeColumn,
    timeFormat: firstData?.kind === 'date' ? 'datetime' : 'elapsed',
    timeUnit: timeUnitFromHeader(timeHeader) ?? (firstData?.kind === 'date' ? 'month' : ''),
    valueColumn,
    valueUnit: valueUnitForStudy(valueHeader, valueUnit),
    seriesColumn,
    temperatureColumn,
    temperatureUnit: /\bK\b|kelvin/.test(
      headers[options.findIndex((o) => o.value === temperatureColumn)] ?? '',
    )
      ? 'K'
      : 'C',
    replicateColumn,
  };
}

export function draftFromMapping(mapping: ColumnMapping, fallbackSheet: string): MappingDraft {
  return {
    ...attributeDraftFromMapping(mapping),
    sheet: mapping.sheet ?? fallbackSheet,
    headerRow: String(mapping.headerRow),
    timeColumn: mapping.timeColumn,
    timeFormat: mapping.timeFormat,
    timeUnit: mapping.timeUnit,
    valueColumn: mapping.valueColumn,
    valueUnit: mapping.valueUnit,
    seriesColumn: mapping.seriesColumn ?? '',
    temperatureColumn: mapping.temperatureColumn ?? '',
    temperatureUnit: mapping.temperatureUnit,
    replicateColumn: mapping.replicateColumn ?? '',
  };
}

export type DraftCheck = { ok: true; mapping: ColumnMapping } | { ok: false; errors: Record<string, string> };

/**
 * Validates the draft with the shared schema; errors keyed by form field (a further value
 * column's fields as "moreValueColumns.0.column"). `attributes` are the study's, for the checks
 * the schema cannot make.
 */
export function checkDraft(draft: MappingDraft, attributes: readonly AttributeChoice[] = []): DraftCheck {
  const optional = (text: string) => (text.trim() === '' ? undefined : text);
  const headerRow = /^\d+$/.test(draft.headerRow.trim()) ? Number(draft.headerRow) : Number.NaN;
  const parsed = columnMappingSchema.safeParse({
    sheet: draft.sheet,
    headerRow,
    timeColumn: draft.timeColumn,
    timeFormat: draft.timeFormat,
    timeUnit: optional(draft.timeUnit),
    valueColumn: draft.valueColumn,
    valueUnit: draft.valueUnit,
    seriesColumn: optional(draft.seriesColumn),
    temperatureColumn: optional(draft.temperatureColumn),
    temperatureUnit: draft.temperatureUnit,
    replicateColumn: optional(draft.replicateColumn),
    ...attributeMappingInput(draft),
  });
  const errors: Record<string, string> = attributeDraftErrors(draft, attributes);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const field =
        issue.path[0] === 'moreValueColumns' && issue.path.length > 1
          ? issue.path.join('.')
          : String(issue.path[0] ?? 'form');
      errors[field] ??= friendly(field, issue.message);
    }
  }
  for (const twice of columnsChosenTwice(draft)) {
    const [first, ...later] = twice.roles;
    for (const field of later)
      errors[field] ??=
        `Column “${twice.column}” is already chosen as the ${roleLabel(first!, draft)}; a column can have one role only.`;
  }
  if (Object.keys(errors).length > 0 || !parsed.success) return { ok: false, errors };
  return { ok: true, mapping: parsed.data };
}

const CHOSEN_COLUMNS = [
  'timeColumn',
  'valueColumn',
  'seriesColumn',
  'temperatureColumn',
  'replicateColumn',
] as const;

/** A column the draft gives more than one role, with the roles in form order. */
export interface ColumnChosenTwice {
  column: string;
  /** Form fields: those of CHOSEN_COLUMNS, "attributeColumn", "moreValueColumns.<i>.column". */
  roles: string[];
}

/** The columns chosen for more than one role (time, value, batch, temperature, replicate, attributes). */
export function columnsChosenTwice(draft: MappingDraft): ColumnChosenTwice[] {
  const byColumn = new Map<string, ColumnChosenTwice['roles']>();
  const fields: [string, string][] = [
    ...CHOSEN_COLUMNS.map((field): [string, string] => [field, draft[field]]),
    ...attributeColumnFields(draft),
  ];
  for (const [field, chosen] of fields) {
    const value = chosen.trim();
    if (value !== '') byColumn.set(value, [...(byColumn.get(value) ?? []), field]);
  }
  return [...byColumn.entries()]
    .filter(([, roles]) => roles.length > 1)
    .map(([column, roles]) => ({ column, roles }));
}

/** "Column “Month” is chosen as both the time column and the value column." */
export function describeColumnChosenTwice(twice: ColumnChosenTwice, draft?: MappingDraft): string {
  const names = twice.roles.map((role) => roleLabel(role, draft));
  const list =
    names.length === 2
      ? names.join(' and the ')
      : `${names.slice(0, -1).join(', the ')} and the ${names.at(-1)}`;
  return `Column “${twice.column}” is chosen as both the ${list}; give it one role and choose another column for the rest.`;
}

const LABELS: Record<string, string> = {
  timeColumn: 'time column',
  valueColumn: 'value column',
  seriesColumn: 'batch column',
  temperatureColumn: 'temperature column',
  replicateColumn: 'replicate column',
};

function roleLabel(field: string, draft: MappingDraft | undefined): string {
  return LABELS[field] ?? (draft ? attributeFieldLabel(field, draft) : undefined) ?? field;
}

function friendly(field: string, message: string): string {
  if (field === 'headerRow')
    return 'Give the header row as a whole number (0 when the sheet has no header row).';
  if (field === 'timeUnit') return 'Choose the unit of time.';
  if (field === 'timeColumn' || field === 'valueColumn') return `Choose the ${LABELS[field]}.`;
  if (field === 'valueUnit') return 'Give the unit of the values, e.g. % of label claim.';
  return message;
}
