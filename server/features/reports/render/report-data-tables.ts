import type { Series } from '../../../../shared/kinetics/types.ts';
import { NOT_ESTIMABLE_TEXT } from './template-format.ts';
import type { ReportTable } from './template-helpers.ts';

/**
 * The measured points of each series, in time order, marking excluded ones with their reason
 * and censored ones ("<LOQ") with their text, and the value they were fitted at when the study's
 * rule fits them at a stated value.
 */
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
        // A result reported below a limit is shown as reported ("<LOQ"), with the value it stood for.
        value: observation.censored
          ? `${observation.censored.text} (censored${observation.excluded ? '' : `; fitted at ${observation.value}`})`
          : String(observation.value),
        source:
          observation.source?.cell ??
          (observation.source?.row === undefined ? '' : `row ${observation.source.row}`),
        status: observation.excluded ? `Excluded: ${observation.excluded.reason}` : 'yes',
      })),
      empty: NOT_ESTIMABLE_TEXT,
    };
  });
}
