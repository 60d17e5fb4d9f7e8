/**
 * The attribute side of a column mapping (issue 15 §1): which further value columns a wide sheet
 * has, which column names each row's attribute in a long sheet, and how the attribute names the
 * mapping or the cells give are matched to the study's attributes.
 *
 * - `findAttributeColumns` resolves `moreValueColumns` and `attributeColumn` like every other
 *   column (`resolve-column.ts`) and refuses a column given two roles, naming its header cell.
 * - `mappingAttributeProblems` refuses attribute names of the mapping that are not attributes of
 *   the study, naming the mapping field and the study's attributes.
 * - `attributeNamer` turns the names found in the attribute column into one spelling per
 *   attribute (the study's, when the study's attributes are known; otherwise the first written),
 *   and collects the names that are not attributes of the study: one problem per name, on the
 *   first cell that gives it, with the count of rows that do.
 *
 * Never throws; problems are returned.
 *
 * Example: with study attributes ['Assay', 'Impurity B'], `attributeNamer(['Assay', 'Impurity B'])`
 * names 'impurity b ' as 'Impurity B', and 'Impurity C' is refused on its cell.
 */
import { sameAttributeName } from '../kinetics/stability/study-attributes.ts';
import { columnLetter, sheetPrefix } from './cell-reference.ts';
import type { ColumnMapping } from './column-mapping.ts';
import { type IntakeProblem, intakeProblem } from './intake-problem.ts';
import type { MappedColumns } from './read-data-rows.ts';
import { headerTexts, resolveColumn } from './resolve-column.ts';
import type { SheetGrid } from './sheet-grid.ts';

/** "Assay, Impurity B and Water". */
function listed(names: readonly string[]): string {
  return names.length <= 1 ? (names[0] ?? '') : `${names.slice(0, -1).join(', ')} and ${names.at(-1)}`;
}

/** The sentence that ends a refusal: what the study's attributes are. */
export function studyAttributesSentence(attributes: readonly string[]): string {
  return attributes.length === 1
    ? `the study's one attribute is ${attributes[0]}`
    : `the study's attributes are ${listed(attributes)}`;
}

/** The study's spelling of a name, or undefined when the study has no such attribute. */
export function studySpelling(attributes: readonly string[], name: string): string | undefined {
  return attributes.find((attribute) => sameAttributeName(attribute, name));
}

/** Attribute names of the mapping that are not the study's, each naming its field. */
export function mappingAttributeProblems(
  mapping: ColumnMapping,
  attributes: readonly string[],
): IntakeProblem[] {
  const problems: IntakeProblem[] = [];
  const check = (name: string | undefined, field: string, column: string) => {
    if (name === undefined || studySpelling(attributes, name) !== undefined) return;
    problems.push(
      intakeProblem(
        `mapping field ${field}`,
        `the value column "${column}" is matched to "${name}", which is not an attribute of this study: ${studyAttributesSentence(attributes)}`,
      ),
    );
  };
  check(mapping.valueAttribute, 'valueAttribute', mapping.valueColumn);
  mapping.moreValueColumns?.forEach((entry, index) => {
    check(entry.attribute, `moreValueColumns[${index}].attribute`, entry.column);
  });
  return problems;
}

const ROLE_NAMES: Record<string, string> = {
  time: 'the time column',
  value: 'the value column',
  series: 'the batch column',
  temperature: 'the temperature column',
  replicate: 'the replicate column',
  attribute: 'the attribute column',
};

/**
 * Resolves the further value columns and the attribute column onto `columns`, or adds problems.
 * A column that would hold two roles is refused on its header cell (or the sheet, without one).
 */
export function findAttributeColumns(
  sheet: SheetGrid,
  mapping: ColumnMapping,
  columns: MappedColumns,
  problems: IntakeProblem[],
): MappedColumns | null {
  const where = sheetPrefix(sheet.name);
  const headers = headerTexts(sheet, mapping.headerRow);
  const start = problems.length;
  const resolve = (name: string, role: string): number | undefined => {
    const resolved = resolveColumn(sheet, mapping.headerRow, name);
    if (resolved.ok) return resolved.index;
    problems.push(intakeProblem(where, `${role}: ${resolved.message}`));
    return undefined;
  };
  const moreValues: NonNullable<MappedColumns['moreValues']> = [];
  for (const entry of mapping.moreValueColumns ?? []) {
    const column = resolve(entry.column, `value column of ${entry.attribute}`);
    if (column !== undefined)
      moreValues.push({ column, attribute: entry.attribute, unit: entry.unit ?? mapping.valueUnit });
  }
  const attribute =
    mapping.attributeColumn === undefined ? undefined : resolve(mapping.attributeColumn, 'attribute column');
  if (problems.length > start) return null;

  const roles = new Map<number, string>();
  const valueRole = (name: string | undefined) =>
    name === undefined ? ROLE_NAMES.value! : `the value column of ${name}`;
  for (const [role, column] of [
    ['time', columns.time],
    ['value', columns.value],
    ['series', columns.series],
    ['temperature', columns.temperature],
    ['replicate', columns.replicate],
  ] as const) {
    if (column !== undefined && !roles.has(column))
      roles.set(column, role === 'value' ? valueRole(mapping.valueAttribute) : ROLE_NAMES[role]!);
  }
  const claim = (column: number, role: string) => {
    const earlier = roles.get(column);
    if (earlier === undefined) {
      roles.set(column, role);
      return;
    }
    const header = headers[column] ?? '';
    const place = mapping.headerRow >= 1 ? `${where}!${columnLetter(column)}${mapping.headerRow}` : where;
    const named = `column ${columnLetter(column)}${header === '' ? '' : ` ("${header}")`}`;
    problems.push(
      intakeProblem(
        place,
        `${named} is mapped twice, as ${earlier} and as ${role}: give each column one role`,
      ),
    );
  };
  for (const entry of moreValues) claim(entry.column, valueRole(entry.attribute));
  if (attribute !== undefined) claim(attribute, ROLE_NAMES.attribute!);
  if (problems.length > start) return null;
  return {
    ...columns,
    ...(attribute !== undefined ? { attribute } : {}),
    ...(moreValues.length > 0 ? { moreValues } : {}),
  };
}

/** One spelling per attribute name, and the names the study does not have. */
export interface AttributeNamer {
  /** The spelling to store for a name as written; undefined for a name the study lacks. */
  name(written: string, cell: string): string | undefined;
  /** One problem per unknown name, on the first cell that gives it. */
  problems(): IntakeProblem[];
}

export function attributeNamer(attributes: readonly string[] | undefined): AttributeNamer {
  const spellings = new Map<string, string>();
  const unknown = new Map<string, { written: string; cell: string; count: number }>();
  const key = (text: string) => text.trim().toLowerCase();
  // Names as written, looked up first: a sheet repeats a few names over 100,000 rows.
  const exact = new Map<string, string>();
  return {
    name(written, cell) {
      const seen = exact.get(written);
      if (seen !== undefined) return seen;
      const found = spellings.get(key(written));
      if (found !== undefined) {
        exact.set(written, found);
        return found;
      }
      if (attributes === undefined) {
        spellings.set(key(written), written.trim());
        return written.trim();
      }
      const spelling = studySpelling(attributes, written);
      if (spelling !== undefined) {
        spellings.set(key(written), spelling);
        return spelling;
      }
      const entry = unknown.get(key(written));
      if (entry) entry.count += 1;
      else unknown.set(key(written), { written: written.trim(), cell, count: 1 });
      return undefined;
    },
    problems() {
      return [...unknown.values()].map((entry) =>
        intakeProblem(
          entry.cell,
          `"${entry.written}" is not an attribute of this study (${entry.count === 1 ? 'this row names it' : `${entry.count} rows name it, the first here`}): ${studyAttributesSentence(attributes ?? [])}; correct the cells or the study's attributes`,
        ),
      );
    },
  };
}
