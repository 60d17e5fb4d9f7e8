import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet } from '../../platform/export/workbook-writer.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { runFigures } from './analysis-view.ts';

/**
 * The workbook sheet "Figure data": every number and text of every figure's inline data, one
 * field of one point per row, so a reader can redraw any figure of the analysis screen.
 */

interface FigureDatum {
  figure: string;
  /** 1-based layer of the figure's spec, depth first. */
  layer: number;
  field: string;
  /** 1-based point of the layer. */
  point: number;
  value: string | number;
}

const FIGURE_DATA_COLUMNS: readonly ExportColumn<FigureDatum>[] = [
  { header: 'Figure', width: 24, type: 'text', value: (row) => row.figure },
  { header: 'Layer', type: 'number', value: (row) => row.layer },
  { header: 'Field', type: 'text', value: (row) => row.field },
  { header: 'Point', type: 'number', value: (row) => row.point },
  { header: 'Value', type: 'text-or-number', value: (row) => row.value },
];

/** The inline data of every layer of a spec, depth first (layers, hconcat panels). */
function collectLayers(spec: Record<string, unknown>): Record<string, unknown>[][] {
  const found: Record<string, unknown>[][] = [];
  const visit = (node: unknown) => {
    if (node === null || typeof node !== 'object') return;
    const record = node as Record<string, unknown>;
    const data = record.data as { values?: unknown } | undefined;
    if (data && Array.isArray(data.values)) found.push(data.values as Record<string, unknown>[]);
    for (const key of ['layer', 'hconcat', 'vconcat', 'concat']) {
      if (Array.isArray(record[key])) for (const child of record[key] as unknown[]) visit(child);
    }
  };
  visit(spec);
  return found;
}

function* figureData(run: AnalysisRunRecord): Generator<FigureDatum> {
  for (const figure of runFigures(run)) {
    for (const [layer, values] of collectLayers(figure.spec).entries()) {
      for (const [point, datum] of values.entries()) {
        for (const [field, value] of Object.entries(datum)) {
          if (typeof value === 'number' || typeof value === 'string')
            yield { figure: figure.id, layer: layer + 1, field, point: point + 1, value };
        }
      }
    }
  }
}

export function figureDataSheet(run: AnalysisRunRecord): PlannedSheet {
  return planSheet({ name: 'Figure data', columns: FIGURE_DATA_COLUMNS, rows: () => figureData(run) });
}
