import { resultRows } from '../../../shared/figures/results-table.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet } from '../../platform/export/workbook-writer.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';

/**
 * The workbook sheet "Arrhenius and Q1E": the Arrhenius and shelf-life rows of the results table,
 * then, per ICH Q1E condition, the regression scale, the poolability explanation and the shelf
 * life of each line, and why the Arrhenius analysis was not completed when it was not.
 */

interface TemperatureRow {
  item: string;
  value?: number | null;
  low?: number | null;
  high?: number | null;
  unit?: string;
  note?: string | null;
}

const TEMPERATURE_COLUMNS: readonly ExportColumn<TemperatureRow>[] = [
  { header: 'Item', width: 40, type: 'text', value: (row) => row.item },
  { header: 'Value', type: 'number', value: (row) => row.value },
  { header: 'CI lower', type: 'number', value: (row) => row.low },
  { header: 'CI upper', type: 'number', value: (row) => row.high },
  { header: 'Unit', width: 18, type: 'text', value: (row) => row.unit },
  { header: 'Note', width: 90, type: 'text', value: (row) => row.note },
];

function* temperatureRows(run: AnalysisRunRecord): Generator<TemperatureRow> {
  const { analysis } = run.result;
  for (const row of resultRows(analysis)) {
    if (row.section !== 'arrhenius' && row.section !== 'shelf-life') continue;
    yield {
      item: row.label,
      value: row.estimate,
      low: row.lower,
      high: row.upper,
      unit: row.unit,
      note: row.note,
    };
  }
  if (analysis.arrhenius?.notApplicableReason)
    yield { item: 'Arrhenius not completed', note: analysis.arrhenius.notApplicableReason };
  for (const condition of analysis.shelfLife ?? []) {
    const where = condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`;
    yield {
      item: `Q1E ${where}: regression scale`,
      note: `${condition.transform} (${condition.transformReason})`,
    };
    if (condition.result?.poolability)
      yield { item: `Q1E ${where}: poolability`, note: condition.result.poolability.explanation };
    for (const line of condition.result?.lines ?? []) {
      yield {
        item: `Q1E ${where}: ${line.label} shelf life`,
        value: line.shelfLife,
        unit: run.series[0]?.timeUnit ?? '',
        note: line.reason,
      };
    }
  }
}

export function temperatureSheet(run: AnalysisRunRecord): PlannedSheet {
  return planSheet({
    name: 'Arrhenius and Q1E',
    columns: TEMPERATURE_COLUMNS,
    rows: () => temperatureRows(run),
  });
}
