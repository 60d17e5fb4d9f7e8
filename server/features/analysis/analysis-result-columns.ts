import type { ResultRow } from '../../../shared/figures/results-table.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';

/**
 * The columns of the tidy results table, shared by the CSV (which names them by `key`, for
 * programs) and the workbook's "Results" sheet (which shows the headings), so both hold the same
 * cells in the same order.
 */
export const RESULT_COLUMNS: readonly ExportColumn<ResultRow>[] = [
  { key: 'key', header: 'Key', width: 36, type: 'text', value: (row) => row.key },
  { key: 'section', header: 'Section', width: 11, type: 'text', value: (row) => row.section },
  { key: 'seriesId', header: 'Series', width: 20, type: 'text', value: (row) => row.seriesId },
  { key: 'batch', header: 'Batch', width: 12, type: 'text', value: (row) => row.batch },
  {
    key: 'temperatureC',
    header: 'Temperature',
    unit: '°C',
    width: 10,
    type: 'number',
    value: (row) => row.temperatureC,
  },
  { key: 'model', header: 'Model', width: 10, type: 'text', value: (row) => row.model },
  { key: 'quantity', header: 'Quantity', width: 18, type: 'text', value: (row) => row.quantity },
  { key: 'label', header: 'Label', width: 28, type: 'text', value: (row) => row.label },
  { key: 'estimate', header: 'Estimate', width: 14, type: 'number', value: (row) => row.estimate },
  { key: 'lower', header: 'CI lower', width: 14, type: 'number', value: (row) => row.lower },
  { key: 'upper', header: 'CI upper', width: 14, type: 'number', value: (row) => row.upper },
  { key: 'unit', header: 'Unit', width: 22, type: 'text', value: (row) => row.unit },
  {
    key: 'digits',
    header: 'Significant figures shown',
    width: 10,
    type: 'number',
    value: (row) => row.digits,
  },
  { key: 'note', header: 'Note', width: 50, type: 'text', value: (row) => row.note },
];
