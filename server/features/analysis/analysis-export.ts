import { PassThrough, type Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import { type ResultRow, resultRows } from '../../../shared/figures/results-table.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { CAUTION, runFigures } from './analysis-view.ts';

/**
 * The exports of an analysis run: an .xlsx workbook (data used and excluded, fits per series and
 * model, derived figures, Arrhenius and Q1E results, the figures' data, the method statement and
 * the caution) and a CSV of the tidy results table. Both are written from the stored result through
 * `resultRows`, like the screen, so every number matches what the analysis page shows; numbers are
 * stored as numbers (full double precision), never as text.
 */

const RESULT_COLUMNS: { header: string; key: keyof ResultRow; width: number }[] = [
  { header: 'Key', key: 'key', width: 36 },
  { header: 'Section', key: 'section', width: 11 },
  { header: 'Series', key: 'seriesId', width: 20 },
  { header: 'Batch', key: 'batch', width: 12 },
  { header: 'Temperature (°C)', key: 'temperatureC', width: 10 },
  { header: 'Model', key: 'model', width: 10 },
  { header: 'Quantity', key: 'quantity', width: 18 },
  { header: 'Label', key: 'label', width: 28 },
  { header: 'Estimate', key: 'estimate', width: 14 },
  { header: 'CI lower', key: 'lower', width: 14 },
  { header: 'CI upper', key: 'upper', width: 14 },
  { header: 'Unit', key: 'unit', width: 22 },
  { header: 'Significant figures shown', key: 'digits', width: 10 },
  { header: 'Note', key: 'note', width: 50 },
];

export function exportFileName(run: AnalysisRunRecord, extension: 'xlsx' | 'csv'): string {
  const product =
    run.study.product
      .replace(/[^A-Za-z0-9]+/g, '-')
      .replace(/^-|-$/g, '')
      .slice(0, 40) || 'study';
  return `rateledger-analysis-${run.id}-${product}.${extension}`;
}

interface SheetPlan {
  name: string;
  columns: { header: string; key: string; width?: number }[];
  rows: { values: Record<string, unknown>; style?: Partial<ExcelJS.Style> }[];
  addRow(values: Record<string, unknown>, style?: Partial<ExcelJS.Style>): void;
}

/**
 * The sheets are planned as plain rows first and then streamed out one after the other with
 * exceljs's streaming writer, which keeps memory flat for a 100 000-row dataset (the in-memory
 * workbook needs several hundred bytes per cell).
 */
function addSheet(plans: SheetPlan[], name: string, columns: SheetPlan['columns']): SheetPlan {
  const plan: SheetPlan = {
    name,
    columns,
    rows: [],
    addRow(values, style) {
      plan.rows.push(style === undefined ? { values } : { values, style });
    },
  };
  plans.push(plan);
  return plan;
}

async function streamWorkbook(
  plans: readonly SheetPlan[],
  run: AnalysisRunRecord,
  stream: Writable,
): Promise<void> {
  const workbook = new ExcelJS.stream.xlsx.WorkbookWriter({
    stream,
    useStyles: true,
    useSharedStrings: false,
  });
  workbook.creator = 'Rateledger';
  workbook.created = run.runAt;
  workbook.modified = run.runAt;
  for (const plan of plans) {
    const sheet = workbook.addWorksheet(plan.name, { views: [{ state: 'frozen', ySplit: 1 }] });
    sheet.columns = plan.columns.map((column) => ({
      header: column.header,
      key: column.key,
      width: column.width ?? 14,
    }));
    const header = sheet.getRow(1);
    header.font = { bold: true };
    header.commit();
    for (const { values, style } of plan.rows) {
      const row = sheet.addRow(
        Object.fromEntries(Object.entries(values).map(([key, value]) => [key, cellValue(value)])),
      );
      if (style?.font) row.font = style.font;
      if (style?.alignment) row.alignment = style.alignment;
      row.commit();
    }
    sheet.commit();
  }
  await workbook.commit();
}

/** Null stays an empty cell; numbers stay numbers. */
const cellValue = (value: unknown): ExcelJS.CellValue =>
  value === null || value === undefined
    ? null
    : typeof value === 'number' || typeof value === 'string' || typeof value === 'boolean'
      ? value
      : JSON.stringify(value);

/** Writes the workbook to `stream` (the HTTP response, or a buffer for tests). */
export async function writeAnalysisWorkbook(run: AnalysisRunRecord, stream: Writable): Promise<void> {
  const { analysis } = run.result;
  const workbook: SheetPlan[] = [];

  const about = addSheet(workbook, 'About', [
    { header: 'Item', key: 'item', width: 28 },
    { header: 'Value', key: 'value', width: 110 },
  ]);
  for (const [item, value] of [
    ['Analysis run', run.id],
    ['Study', run.study.title],
    ['Product', run.study.product],
    ['Attribute', `${run.study.attribute} (${run.study.unit})`],
    ['Lower limit', run.study.lowerLimit],
    ['Upper limit', run.study.upperLimit],
    ['Storage temperature (°C)', run.study.storageTemperatureC],
    ['Dataset', run.datasetId],
    ['Dataset SHA-256', run.datasetSha256],
    ['Engine version', run.engineVersion],
    ['Run by', run.runBy.fullName],
    ['Run at (UTC)', run.runAt.toISOString()],
    ['Supersedes run', run.supersedesRunId],
    ['Options', JSON.stringify(run.options.analyst)],
    ['Caution', CAUTION],
  ] as const) {
    about.addRow({ item, value: cellValue(value) });
  }

  const results = addSheet(workbook, 'Results', RESULT_COLUMNS);
  for (const row of resultRows(analysis))
    results.addRow(Object.fromEntries(RESULT_COLUMNS.map(({ key }) => [key, cellValue(row[key])])));

  const data = addSheet(workbook, 'Data', [
    { header: 'Series', key: 'series', width: 20 },
    { header: 'Batch', key: 'batch' },
    { header: 'Temperature (°C)', key: 'temperature' },
    { header: 'Observation', key: 'index' },
    { header: 'Time', key: 'time' },
    { header: 'Time unit', key: 'timeUnit' },
    { header: 'Value', key: 'value' },
    { header: 'Value unit', key: 'valueUnit', width: 18 },
    { header: 'Used', key: 'used', width: 8 },
    { header: 'Exclusion reason', key: 'reason', width: 50 },
    { header: 'Source cell', key: 'cell' },
  ]);
  for (const series of run.series) {
    series.observations.forEach((observation, index) => {
      data.addRow({
        series: series.id,
        batch: series.batch ?? null,
        temperature: series.temperatureC ?? null,
        index: index + 1,
        time: observation.time,
        timeUnit: series.timeUnit,
        value: observation.value,
        valueUnit: series.valueUnit,
        used: observation.excluded ? 'no' : 'yes',
        reason: observation.excluded?.reason ?? null,
        cell: observation.source?.cell ?? null,
      });
    });
  }

  const fits = addSheet(workbook, 'Fits', [
    { header: 'Series', key: 'series', width: 20 },
    { header: 'Model', key: 'model' },
    { header: 'Reported', key: 'reported' },
    { header: 'k', key: 'k' },
    { header: 'SE(k)', key: 'kSe' },
    { header: 'k CI lower', key: 'kLow' },
    { header: 'k CI upper', key: 'kHigh' },
    { header: 'Unit of k', key: 'kUnit', width: 22 },
    { header: 'C0', key: 'c0' },
    { header: 'SE(C0)', key: 'c0Se' },
    { header: 'n', key: 'n' },
    { header: 'AICc', key: 'aicc' },
    { header: 'Akaike weight', key: 'weight' },
    { header: 'RSS', key: 'rss' },
    { header: 'Residual SD', key: 'sd' },
    { header: 'Degrees of freedom', key: 'df' },
    { header: 'Converged', key: 'converged' },
    { header: 'Note', key: 'note', width: 50 },
  ]);
  const linear = addSheet(workbook, 'Linearised', [
    { header: 'Series', key: 'series', width: 20 },
    { header: 'Plot', key: 'transform' },
    { header: 'Slope', key: 'slope' },
    { header: 'Intercept', key: 'intercept' },
    { header: 'R²', key: 'rSquared' },
    { header: 'k implied', key: 'k' },
    { header: 'C0 implied', key: 'c0' },
    { header: 'Points', key: 'n' },
    { header: 'Note', key: 'note', width: 50 },
  ]);
  const verdicts = addSheet(workbook, 'Verdicts', [
    { header: 'Series', key: 'series', width: 20 },
    { header: 'Points used', key: 'n' },
    { header: 'Order reported', key: 'order' },
    { header: 'Source', key: 'source' },
    { header: 'Error model', key: 'errorModel' },
    { header: 'Fraction reacted', key: 'fraction' },
    { header: 'Verdict', key: 'verdict', width: 90 },
    { header: 'Warnings', key: 'warnings', width: 90 },
  ]);
  for (const result of analysis.series) {
    const fitted = result.analysis;
    if (!fitted) {
      verdicts.addRow({ series: result.id, verdict: `Not analysed: ${result.error?.message ?? ''}` });
      continue;
    }
    verdicts.addRow({
      series: result.id,
      n: fitted.n,
      order: fitted.reportedOrder,
      source: fitted.orderSource,
      errorModel: fitted.errorModel,
      fraction: fitted.fractionReacted,
      verdict: fitted.verdict,
      warnings: fitted.warnings.map((warning) => warning.message).join(' | '),
    });
    for (const model of fitted.models) {
      fits.addRow({
        series: result.id,
        model: String(model.order),
        reported: String(model.order) === String(fitted.reportedOrder) ? 'yes' : 'no',
        k: model.k,
        kSe: model.kStandardError,
        kLow: model.kCi95?.[0] ?? null,
        kHigh: model.kCi95?.[1] ?? null,
        kUnit: model.kUnit,
        c0: model.c0,
        c0Se: model.c0StandardError,
        n: model.n ?? (model.order === 'n' ? null : model.order),
        aicc: model.aicc,
        weight: model.weight,
        rss: model.rss,
        sd: model.residualStandardDeviation,
        df: model.degreesOfFreedom,
        converged: model.converged ? 'yes' : 'no',
        note: model.reason ?? null,
      });
    }
    for (const line of fitted.linearized) {
      linear.addRow({ series: result.id, ...line, note: line.reason ?? null });
    }
  }

  const temperature = addSheet(workbook, 'Arrhenius and Q1E', [
    { header: 'Item', key: 'item', width: 40 },
    { header: 'Value', key: 'value' },
    { header: 'CI lower', key: 'low' },
    { header: 'CI upper', key: 'high' },
    { header: 'Unit', key: 'unit', width: 18 },
    { header: 'Note', key: 'note', width: 90 },
  ]);
  for (const row of resultRows(analysis).filter(
    (entry) => entry.section === 'arrhenius' || entry.section === 'shelf-life',
  )) {
    temperature.addRow({
      item: row.label,
      value: row.estimate,
      low: row.lower,
      high: row.upper,
      unit: row.unit,
      note: row.note,
    });
  }
  if (analysis.arrhenius?.notApplicableReason)
    temperature.addRow({ item: 'Arrhenius not completed', note: analysis.arrhenius.notApplicableReason });
  for (const condition of analysis.shelfLife ?? []) {
    const where = condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`;
    temperature.addRow({
      item: `Q1E ${where}: regression scale`,
      note: `${condition.transform} (${condition.transformReason})`,
    });
    if (condition.result?.poolability)
      temperature.addRow({
        item: `Q1E ${where}: poolability`,
        note: condition.result.poolability.explanation,
      });
    for (const line of condition.result?.lines ?? []) {
      temperature.addRow({
        item: `Q1E ${where}: ${line.label} shelf life`,
        value: line.shelfLife,
        unit: run.series[0]?.timeUnit ?? '',
        note: line.reason,
      });
    }
  }

  const figureData = addSheet(workbook, 'Figure data', [
    { header: 'Figure', key: 'figure', width: 24 },
    { header: 'Layer', key: 'layer' },
    { header: 'Field', key: 'field' },
    { header: 'Point', key: 'point' },
    { header: 'Value', key: 'value' },
  ]);
  for (const figure of runFigures(run)) {
    collectLayers(figure.spec).forEach((values, layer) => {
      values.forEach((datum, point) => {
        for (const [field, value] of Object.entries(datum)) {
          if (typeof value === 'number' || typeof value === 'string')
            figureData.addRow({ figure: figure.id, layer: layer + 1, field, point: point + 1, value });
        }
      });
    });
  }

  const method = addSheet(workbook, 'Method statement', [
    { header: 'Method statement', key: 'text', width: 140 },
  ]);
  for (const paragraph of run.methodStatement.split(/\n\n+/))
    method.addRow({ text: paragraph }, { alignment: { wrapText: true, vertical: 'top' } });
  method.addRow({ text: '' });
  method.addRow({ text: CAUTION }, { font: { italic: true } });

  await streamWorkbook(workbook, run, stream);
}

/** The workbook as one buffer. */
export async function analysisWorkbook(run: AnalysisRunRecord): Promise<Buffer> {
  const chunks: Buffer[] = [];
  const sink = new PassThrough();
  sink.on('data', (chunk: Buffer) => chunks.push(chunk));
  const finished = new Promise<void>((resolve, reject) => {
    sink.on('end', resolve);
    sink.on('error', reject);
  });
  await writeAnalysisWorkbook(run, sink);
  await finished;
  return Buffer.concat(chunks);
}

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

/** RFC 4180 field: quoted when it holds a comma, quote or line break. */
function csvField(value: unknown): string {
  if (value === null || value === undefined) return '';
  const text = typeof value === 'number' ? String(value) : String(value);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/** The tidy results table as CSV (RFC 4180, UTF-8 with a BOM so spreadsheet programs read °). */
export function analysisCsv(run: AnalysisRunRecord): string {
  const lines = [RESULT_COLUMNS.map((column) => csvField(column.key)).join(',')];
  for (const row of resultRows(run.result.analysis)) {
    lines.push([...RESULT_COLUMNS.map(({ key }) => csvField(row[key]))].join(','));
  }
  return `\ufeff${lines.join('\r\n')}\r\n`;
}
