import type { DatasetAnalysis, SeriesResult } from '../../../shared/kinetics/analyse-dataset.ts';
import type { SeriesAnalysis } from '../../../shared/kinetics/analyse-series.ts';
import type { ModelSummary } from '../../../shared/kinetics/derived/model-summary.ts';
import type { LinearisedFit } from '../../../shared/kinetics/order/linearised-fits.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet } from '../../platform/export/workbook-writer.ts';

/**
 * The workbook sheets of the fits of each series: "Fits" (one row per series and rate law),
 * "Linearised" (one row per series and linearised plot) and "Verdicts" (one row per series: the
 * order reported and why, or why the series could not be analysed).
 */

interface FitRow {
  series: string;
  fitted: SeriesAnalysis;
  model: ModelSummary;
}

const FIT_COLUMNS: readonly ExportColumn<FitRow>[] = [
  { header: 'Series', width: 20, type: 'text', value: ({ series }) => series },
  { header: 'Model', type: 'text', value: ({ model }) => String(model.order) },
  {
    header: 'Reported',
    type: 'text',
    value: ({ model, fitted }) => (String(model.order) === String(fitted.reportedOrder) ? 'yes' : 'no'),
  },
  { header: 'k', type: 'number', value: ({ model }) => model.k },
  { header: 'SE(k)', type: 'number', value: ({ model }) => model.kStandardError },
  { header: 'k CI lower', type: 'number', value: ({ model }) => model.kCi95?.[0] },
  { header: 'k CI upper', type: 'number', value: ({ model }) => model.kCi95?.[1] },
  { header: 'Unit of k', width: 22, type: 'text', value: ({ model }) => model.kUnit },
  { header: 'C0', type: 'number', value: ({ model }) => model.c0 },
  { header: 'SE(C0)', type: 'number', value: ({ model }) => model.c0StandardError },
  {
    header: 'n',
    type: 'number',
    value: ({ model }) => model.n ?? (model.order === 'n' ? null : model.order),
  },
  { header: 'AICc', type: 'number', value: ({ model }) => model.aicc },
  { header: 'Akaike weight', type: 'number', value: ({ model }) => model.weight },
  { header: 'RSS', type: 'number', value: ({ model }) => model.rss },
  { header: 'Residual SD', type: 'number', value: ({ model }) => model.residualStandardDeviation },
  { header: 'Degrees of freedom', type: 'number', value: ({ model }) => model.degreesOfFreedom },
  { header: 'Converged', type: 'text', value: ({ model }) => (model.converged ? 'yes' : 'no') },
  { header: 'Note', width: 50, type: 'text', value: ({ model }) => model.reason },
];

interface LinearisedRow {
  series: string;
  line: LinearisedFit;
}

const LINEARISED_COLUMNS: readonly ExportColumn<LinearisedRow>[] = [
  { header: 'Series', width: 20, type: 'text', value: ({ series }) => series },
  { header: 'Plot', type: 'text', value: ({ line }) => line.transform },
  { header: 'Slope', type: 'number', value: ({ line }) => line.slope },
  { header: 'Intercept', type: 'number', value: ({ line }) => line.intercept },
  { header: 'R²', type: 'number', value: ({ line }) => line.rSquared },
  { header: 'k implied', type: 'number', value: ({ line }) => line.k },
  { header: 'C0 implied', type: 'number', value: ({ line }) => line.c0 },
  { header: 'Points', type: 'number', value: ({ line }) => line.n },
  { header: 'Note', width: 50, type: 'text', value: ({ line }) => line.reason },
];

const VERDICT_COLUMNS: readonly ExportColumn<SeriesResult>[] = [
  { header: 'Series', width: 20, type: 'text', value: (result) => result.id },
  { header: 'Points used', type: 'number', value: (result) => result.analysis?.n },
  { header: 'Order reported', type: 'number', value: (result) => result.analysis?.reportedOrder },
  { header: 'Source', type: 'text', value: (result) => result.analysis?.orderSource },
  { header: 'Error model', type: 'text', value: (result) => result.analysis?.errorModel },
  { header: 'Fraction reacted', type: 'number', value: (result) => result.analysis?.fractionReacted },
  {
    header: 'Verdict',
    width: 90,
    type: 'text',
    value: (result) => result.analysis?.verdict ?? `Not analysed: ${result.error?.message ?? ''}`,
  },
  {
    header: 'Warnings',
    width: 90,
    type: 'text',
    value: (result) => result.analysis?.warnings.map((warning) => warning.message).join(' | '),
  },
];

function* fitRows(analysis: DatasetAnalysis): Generator<FitRow> {
  for (const { id, analysis: fitted } of analysis.series) {
    if (!fitted) continue;
    for (const model of fitted.models) yield { series: id, fitted, model };
  }
}

function* linearisedRows(analysis: DatasetAnalysis): Generator<LinearisedRow> {
  for (const { id, analysis: fitted } of analysis.series) {
    for (const line of fitted?.linearized ?? []) yield { series: id, line };
  }
}

export function fitSheets(analysis: DatasetAnalysis): PlannedSheet[] {
  return [
    planSheet({ name: 'Fits', columns: FIT_COLUMNS, rows: () => fitRows(analysis) }),
    planSheet({ name: 'Linearised', columns: LINEARISED_COLUMNS, rows: () => linearisedRows(analysis) }),
    planSheet({ name: 'Verdicts', columns: VERDICT_COLUMNS, rows: () => analysis.series }),
  ];
}
