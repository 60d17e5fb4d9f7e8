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
 * Example: `columnMappingSchema.parse({ timeColumn: 'Month', timeUnit: 'month', valueColumn: 'Assay' })`
 * gives `{ headerRow: 1, timeFormat: 'elapsed', valueUnit: '%', temperatureUnit: 'C', ... }`.
 */
import { z } from 'zod';
import { TIME_UNITS } from '../kinetics/units.ts';

const columnName = z.string().trim().min(1, 'Name a column by its header text or its letter.');

export const columnMappingSchema = z.object({
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
  /** Batch (lot) identifier; rows with different values form different series. */
  seriesColumn: columnName.optional(),
  /** Storage temperature per row; rows at different temperatures form different series. */
  temperatureColumn: columnName.optional(),
  temperatureUnit: z.enum(['C', 'K']).default('C'),
  /** Replicate label; the same label twice at one time in one series is reported. */
  replicateColumn: columnName.optional(),
});

/** A mapping as a caller writes it (defaults may be left out). */
export type ColumnMappingInput = z.input<typeof columnMappingSchema>;
/** A validated mapping, with defaults filled in. */
export type ColumnMapping = z.output<typeof columnMappingSchema>;
