/* One row of the results table (`results-table.ts`), in its own module so that the modules that
   add rows can name the type without importing the table itself. */

export type ResultSection = 'rate-law' | 'derived' | 'plausible' | 'linearised' | 'arrhenius' | 'shelf-life';

export interface ResultRow {
  key: string;
  section: ResultSection;
  seriesId: string | null;
  batch: string | null;
  temperatureC: number | null;
  /** '0', '1', '2', 'n' for rate laws; the transform for linearised plots; null otherwise. */
  model: string | null;
  quantity: string;
  label: string;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
  unit: string;
  digits: number;
  note: string;
}
