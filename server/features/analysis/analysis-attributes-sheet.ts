import type { ResultRow } from '../../../shared/figures/result-row.ts';
import { resultRows } from '../../../shared/figures/results-table.ts';
import type { StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import type {
  AttributeShelfLife,
  MassBalancePoint,
  MassBalanceSeries,
} from '../../../shared/kinetics/stability/study-shelf-life-types.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet } from '../../platform/export/workbook-writer.ts';
import { RESULT_COLUMNS } from './analysis-result-columns.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';

/**
 * The export sheets of a run of several attributes (issue 15 §1), written only when the stored
 * result carries them, so a run of one attribute exports exactly what it always did:
 * "Shelf life by attribute" (each attribute's proposal at the long-term condition, the limiting
 * one marked, then the study's own), "Other attributes" (the tidy results rows of every attribute
 * after the first, each row naming its attribute) and "Mass balance" (assay plus degradation
 * products at each pull of each batch and condition, with the trend of the total).
 */

/** A result row of one attribute; the CSV of a multi-attribute run lists every attribute's rows. */
export interface AttributeResultRow {
  attribute: string;
  row: ResultRow;
}

export const ATTRIBUTE_RESULT_COLUMNS: readonly ExportColumn<AttributeResultRow>[] = [
  { key: 'attribute', header: 'Attribute', width: 18, type: 'text', value: ({ attribute }) => attribute },
  ...RESULT_COLUMNS.map(
    (column) =>
      ({
        ...column,
        value: ({ row }: AttributeResultRow) => column.value(row),
      }) as ExportColumn<AttributeResultRow>,
  ),
];

/** Every attribute's result rows, the first attribute's first (study order). */
export function* attributeResultRows(
  run: AnalysisRunRecord,
  includeFirst: boolean,
): Generator<AttributeResultRow> {
  if (includeFirst)
    for (const row of resultRows(run.result.analysis)) yield { attribute: run.study.attribute, row };
  for (const entry of run.result.otherAttributes ?? [])
    for (const row of resultRows(entry.analysis)) yield { attribute: entry.attribute.name, row };
}

type ShelfRow =
  | { entry: AttributeShelfLife; study?: undefined }
  | { entry?: undefined; study: NonNullable<StoredAnalysisResult['studyShelfLife']> };

const SHELF_COLUMNS: readonly ExportColumn<ShelfRow>[] = [
  {
    header: 'Attribute',
    width: 22,
    type: 'text',
    value: (row) => (row.entry ? row.entry.attribute.name : 'Study (earliest of the attributes)'),
  },
  { header: 'Unit', type: 'text', value: (row) => row.entry?.attribute.unit },
  { header: 'Lower limit', type: 'number', value: (row) => row.entry?.attribute.lowerLimit },
  { header: 'Upper limit', type: 'number', value: (row) => row.entry?.attribute.upperLimit },
  {
    header: 'Proposed shelf life',
    unit: 'months',
    type: 'number',
    value: (row) => (row.entry ?? row.study)!.proposedShelfLifeMonths,
  },
  {
    header: 'Proposed shelf life, in the time unit',
    type: 'number',
    value: (row) => (row.entry ?? row.study)!.proposedShelfLife,
  },
  { header: 'Time unit', type: 'text', value: (row) => (row.entry ?? row.study)!.timeUnit },
  {
    header: 'Limiting',
    width: 22,
    type: 'text',
    value: (row) =>
      row.entry ? (row.entry.limiting ? 'yes' : 'no') : row.study!.limitingAttributes.join(', '),
  },
  { header: 'Reason', width: 60, type: 'text', value: (row) => (row.entry ?? row.study)!.reason },
  { header: 'Statement', width: 90, type: 'text', value: (row) => (row.entry ?? row.study)!.statement },
];

interface BalanceRow {
  series: MassBalanceSeries;
  point: MassBalancePoint;
}

const BALANCE_COLUMNS: readonly ExportColumn<BalanceRow>[] = [
  { header: 'Batch', type: 'text', value: ({ series }) => series.batch },
  { header: 'Temperature', unit: '°C', type: 'number', value: ({ series }) => series.temperatureC },
  { header: 'Time', type: 'number', value: ({ point }) => point.time },
  { header: 'Assay', type: 'number', value: ({ point }) => point.assay },
  { header: 'Degradation products', type: 'number', value: ({ point }) => point.degradants },
  { header: 'Total', type: 'number', value: ({ point }) => point.total },
  { header: 'Percent of initial', type: 'number', value: ({ point }) => point.percentOfInitial },
  {
    header: 'Trend slope',
    unit: '% per time unit',
    type: 'number',
    value: ({ series }) => series.trend?.slope,
  },
  { header: 'Trend CI lower', type: 'number', value: ({ series }) => series.trend?.lower },
  { header: 'Trend CI upper', type: 'number', value: ({ series }) => series.trend?.upper },
  { header: 'Confidence level', type: 'number', value: ({ series }) => series.trend?.confidenceLevel },
];

const STATEMENT_COLUMNS: readonly ExportColumn<string>[] = [
  { header: 'Mass balance', width: 140, type: 'text', value: (text) => text },
];

/** The sheets a multi-attribute run adds; none for a run of one attribute. */
export function attributeSheets(run: AnalysisRunRecord): PlannedSheet[] {
  const { studyShelfLife, otherAttributes, massBalance } = run.result;
  const sheets: PlannedSheet[] = [];
  if (studyShelfLife) {
    const rows: ShelfRow[] = [
      ...studyShelfLife.attributes.map((entry) => ({ entry })),
      { study: studyShelfLife },
    ];
    sheets.push(planSheet({ name: 'Shelf life by attribute', columns: SHELF_COLUMNS, rows: () => rows }));
  }
  if (otherAttributes?.length) {
    sheets.push(
      planSheet({
        name: 'Other attributes',
        columns: ATTRIBUTE_RESULT_COLUMNS,
        rows: () => attributeResultRows(run, false),
      }),
    );
  }
  if (massBalance) {
    const unit = `${massBalance.unit}; time in ${massBalance.timeUnit}; ${massBalance.assayAttribute} + ${massBalance.degradantAttributes.join(' + ')}`;
    sheets.push(
      planSheet({
        name: 'Mass balance',
        columns: BALANCE_COLUMNS.map((column) => (column.header === 'Total' ? { ...column, unit } : column)),
        rows: () => massBalance.series.flatMap((series) => series.points.map((point) => ({ series, point }))),
      }),
      planSheet({
        name: 'Mass balance statement',
        columns: STATEMENT_COLUMNS,
        rows: () => [massBalance.statement],
      }),
    );
  }
  return sheets;
}
