/**
 * Which columns of an uploaded sheet hold time, value, batch and temperature: the column mapping.
 *
 * One zod schema, used by the command line, the upload form in the browser and the upload route on
 * the server, so all three accept and reject exactly the same mappings. Columns are named by their
 * header text (matched without regard to case or surrounding spaces) or by their letter ("C");
 * header text wins when both could apply. Rows are numbered from 1 as in a spreadsheet;
 * `headerRow: 0` means the sheet has no header row and columns are given by letter.
 *
 * Time is either a number of elapsed `timeUnit`s (`timeFormat: 'elapsed'`, the default), or a date
 * or date-time per row (`timeFormat: 'datetime'`), turned into elapsed `timeUnit`s since the first
 * sample of each series (months and years on the calendar; see `elapsed-time.ts`).
 *
 * A sheet may hold several attributes of a study (assay, each degradation product, water), in
 * either of the two common layouts (issue 15 §1):
 * - wide, one column per attribute: `valueAttribute` names the attribute of `valueColumn`, and
 *   `moreValueColumns` lists each further column with its attribute (and its unit, when it is not
 *   `valueUnit`);
 * - long, one value column beside a column naming the attribute of each row: `attributeColumn`.
 * Not both. A mapping that names no attribute reads one attribute, as before attributes existed,
 * and its parsed form carries none of these keys (stored mappings compare unchanged).
 *
 * Example: `columnMappingSchema.parse({ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' })`
 * gives `{ headerRow: 1, timeFormat: 'elapsed', valueUnit: '%', temperatureUnit: 'C', ... }`.
 */
import { z } from 'zod';
import { sameAttributeName } from '../kinetics/stability/study-attributes.ts';
import { TIME_UNITS } from '../kinetics/units.ts';

const columnName = z.string().trim().min(1, 'Name a column by its header text or its letter.');
const attributeName = z.string().trim().min(1, 'Name the study attribute this column measures.').max(200);

/** A further value column of the wide layout: the column, its attribute, and its unit if another. */
export const moreValueColumnSchema = z.object({
  column: columnName,
  attribute: attributeName,
  unit: z.string().trim().min(1).max(100).optional(),
});
export type MoreValueColumn = z.output<typeof moreValueColumnSchema>;

export const columnMappingSchema = z
  .object({
    /** Sheet name; the first sheet when omitted. */
    sheet: z.string().min(1).optional(),
    /** 1-based row of the column headers; 0 when there is none. Data start on the next row. */
    headerRow: z.int().min(0).default(1),
    timeColumn: columnName,
    timeFormat: z.enum(['elapsed', 'datetime']).default('elapsed'),
    /** Unit of the elapsed time: as written in the sheet, or the unit dates are converted to. */
    timeUnit: z.enum(TIME_UNITS),
    valueColumn: columnName,
    valueUnit: z.string().trim().min(1).default('%'),
    /** Wide layout: the study attribute `valueColumn` measures. */
    valueAttribute: attributeName.optional(),
    /** Wide layout: one further column per further attribute. Requires `valueAttribute`. */
    moreValueColumns: z.array(moreValueColumnSchema).min(1).max(50).optional(),
    /** Long layout: the column naming the attribute of each row's value. */
    attributeColumn: columnName.optional(),
    /** Batch (lot) identifier; rows with different values form different series. */
    seriesColumn: columnName.optional(),
    /** Storage temperature per row; rows at different temperatures form different series. */
    temperatureColumn: columnName.optional(),
    temperatureUnit: z.enum(['C', 'K']).default('C'),
    /** Replicate label; the same label twice at one time in one series is reported. */
    replicateColumn: columnName.optional(),
  })
  .superRefine((mapping, context) => {
    const wide = mapping.valueAttribute !== undefined || mapping.moreValueColumns !== undefined;
    if (wide && mapping.attributeColumn !== undefined) {
      context.addIssue({
        code: 'custom',
        path: ['attributeColumn'],
        message:
          'Choose one layout: an attribute per value column, or a column naming the attribute of each row, not both.',
      });
    }
    if (mapping.moreValueColumns !== undefined && mapping.valueAttribute === undefined) {
      context.addIssue({
        code: 'custom',
        path: ['valueAttribute'],
        message: 'Name the attribute of the value column as well as those of the further value columns.',
      });
    }
    const named: { attribute: string; path: (string | number)[] }[] = [];
    if (mapping.valueAttribute !== undefined)
      named.push({ attribute: mapping.valueAttribute, path: ['valueAttribute'] });
    mapping.moreValueColumns?.forEach((entry, index) => {
      named.push({ attribute: entry.attribute, path: ['moreValueColumns', index, 'attribute'] });
    });
    named.forEach((entry, index) => {
      const earlier = named
        .slice(0, index)
        .find((other) => sameAttributeName(other.attribute, entry.attribute));
      if (earlier === undefined) return;
      context.addIssue({
        code: 'custom',
        path: entry.path,
        message: `The attribute "${entry.attribute}" is already given to another value column; each attribute has one column.`,
      });
    });
  });

/** True when the mapping names the attributes its values measure (wide or long layout). */
export function mappingNamesAttributes(mapping: ColumnMapping): boolean {
  return (
    mapping.valueAttribute !== undefined ||
    mapping.moreValueColumns !== undefined ||
    mapping.attributeColumn !== undefined
  );
}

/** A mapping as a caller writes it (defaults may be left out). */
export type ColumnMappingInput = z.input<typeof columnMappingSchema>;
/** A validated mapping, with defaults filled in. */
export type ColumnMapping = z.output<typeof columnMappingSchema>;
