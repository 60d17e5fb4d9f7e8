import { MODEL_NAMES, type ResultRow, resultRows } from '../../shared/figures/results-table.ts';
import type { DatasetAnalysis } from '../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { interval, NOT_ESTIMABLE_TEXT, significant } from './template-format.ts';
import type { ReportTable } from './template-helpers.ts';

/**
 * The tables of a report, as `ReportTable` objects of pre-formatted text (the `table` helper
 * escapes and prints them): the results, one per section of `resultRows` — the same rows, with
 * the same significant figures, as the analysis screen and the exported workbook — and the
 * measured data of each series with every exclusion and its reason.
 *
 * Throws nothing.
 *
 * Example: a first-order series with k = 6.213e-4 1/s gives, in the "Rate laws" table, a row
 * whose Estimate cell is "6.213 × 10⁻⁴ 1/s".
 */

const SECTION_CAPTIONS: Record<ResultRow['section'], string> = {
  'rate-law': 'Rate-law fits',
  derived: 'Half-life, t90 and time to the limits (reported order)',
  linearised: 'Straight-line plots (for reference only)',
  arrhenius: 'Temperature dependence (Arrhenius)',
  'shelf-life': 'ICH Q1E shelf life',
};

const where = (row: ResultRow) =>
  [row.seriesId ?? '', row.temperatureC === null ? '' : `${row.temperatureC} °C`].filter(Boolean).join(' · ') || 'All';

function modelName(row: ResultRow): string {
  if (row.model === null) return '';
  return MODEL_NAMES[row.model] ?? row.model;
}

/** One results table per section present, in a fixed order. */
export function resultTables(analysis: DatasetAnalysis): ReportTable[] {
  const rows = resultRows(analysis);
  const sections = ['derived', 'shelf-life', 'arrhenius', 'rate-law', 'linearised'] as const;
  return sections.flatMap((section) => {
    const chosen = rows.filter((row) => row.section === section);
    if (chosen.length === 0) return [];
    const hasInterval = chosen.some((row) => row.lower !== null);
    return [
      {
        caption: SECTION_CAPTIONS[section],
        columns: [
          { key: 'where', label: 'Series / condition' },
          { key: 'model', label: 'Model' },
          { key: 'quantity', label: 'Quantity' },
          { key: 'estimate', label: 'Estimate', align: 'right' as const },
          ...(hasInterval ? [{ key: 'interval', label: `${Math.round(analysis.confidenceLevel * 100)} % interval`, align: 'right' as const }] : []),
          { key: 'note', label: 'Note' },
        ],
        rows: chosen.map((row) => ({
          where: where(row),
          model: modelName(row),
          quantity: row.label,
          estimate: significant(row.estimate, row.digits, row.unit),
          interval: row.lower === null || row.upper === null ? '' : interval([row.lower, row.upper], row.digits, row.unit),
          note: row.note,
        })),
      },
    ];
  });
}

/** The measured points of each series, in time order, marking excluded ones with their reason. */
export function dataTables(seriesList: readonly Series[]): ReportTable[] {
  return seriesList.map((series) => {
    const observations = [...series.observations].sort((a, b) => a.time - b.time);
    const conditions = [
      series.batch ? `batch ${series.batch}` : '',
      series.temperatureC === undefined ? '' : `${series.temperatureC} °C`,
    ].filter(Boolean);
    return {
      caption: `Measured data: ${series.id}${conditions.length > 0 ? ` (${conditions.join(', ')})` : ''}`,
      columns: [
        { key: 'time', label: `Time (${series.timeUnit})`, align: 'right' as const },
        { key: 'value', label: `Value (${series.valueUnit})`, align: 'right' as const },
        { key: 'source', label: 'Source cell' },
        { key: 'status', label: 'Used' },
      ],
      rows: observations.map((observation) => ({
        time: String(observation.time),
        value: String(observation.value),
        source: observation.source?.cell ?? (observation.source?.row === undefined ? '' : `row ${observation.source.row}`),
        status: observation.excluded ? `Excluded: ${observation.excluded.reason}` : 'yes',
      })),
      empty: NOT_ESTIMABLE_TEXT,
    };
  });
}
