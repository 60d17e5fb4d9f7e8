import type { Observation, Series } from '../../../shared/kinetics/types.ts';
import type { ExportColumn } from '../../platform/export/export-columns.ts';
import { type PlannedSheet, planSheet, type RowStyle } from '../../platform/export/workbook-writer.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { CAUTION } from './analysis-view.ts';
import { standingSentences } from './study-snapshot.ts';

/**
 * The workbook sheets that record what a run was: "About" (the run, study and dataset it belongs
 * to), "Data" (every observation, used or excluded, with its source cell) and "Method statement".
 */

type AboutRow = readonly [item: string, value: string | number | null];

const ABOUT_COLUMNS: readonly ExportColumn<AboutRow>[] = [
  { header: 'Item', width: 28, type: 'text', value: ([item]) => item },
  { header: 'Value', width: 110, type: 'text-or-number', value: ([, value]) => value },
];

export function aboutSheet(run: AnalysisRunRecord): PlannedSheet {
  const rows: AboutRow[] = [
    ['Analysis run', run.id],
    ['Study', run.study.title],
    ['Product', run.study.product],
    ['Attribute', `${run.study.attribute} (${run.study.unit})`],
    // Issue 15 §1: a run of several attributes names the others (their criteria are in "Shelf life by attribute").
    ...(run.result.otherAttributes?.length
      ? ([
          [
            'Other attributes',
            run.result.otherAttributes
              .map(({ attribute }) => `${attribute.name} (${attribute.unit})`)
              .join('; '),
          ],
        ] as AboutRow[])
      : []),
    ['Lower limit', run.study.lowerLimit],
    ['Upper limit', run.study.upperLimit],
    ['Storage temperature (°C)', run.study.storageTemperatureC],
    ['Study version', run.studyStanding.versionNumber],
    ['Study changed since', standingSentences(run.studyStanding).join(' | ') || 'not changed'],
    ['Dataset', run.datasetId],
    ['Dataset SHA-256', run.datasetSha256],
    ['Engine version', run.engineVersion],
    ['Run by', run.runBy.fullName],
    ['Run at (UTC)', run.runAt.toISOString()],
    ['Supersedes run', run.supersedesRunId],
    ['Options', JSON.stringify(run.options.analyst)],
    ['Caution', CAUTION],
  ];
  return planSheet({ name: 'About', columns: ABOUT_COLUMNS, rows: () => rows });
}

interface DataRow {
  series: Series;
  observation: Observation;
  /** 0-based position of the observation in its series. */
  index: number;
}

const DATA_COLUMNS: readonly ExportColumn<DataRow>[] = [
  { header: 'Series', width: 20, type: 'text', value: ({ series }) => series.id },
  { header: 'Batch', type: 'text', value: ({ series }) => series.batch },
  { header: 'Temperature', unit: '°C', type: 'number', value: ({ series }) => series.temperatureC },
  { header: 'Observation', type: 'number', value: ({ index }) => index + 1 },
  { header: 'Time', type: 'number', value: ({ observation }) => observation.time },
  { header: 'Time unit', type: 'text', value: ({ series }) => series.timeUnit },
  { header: 'Value', type: 'number', value: ({ observation }) => observation.value },
  { header: 'Value unit', width: 18, type: 'text', value: ({ series }) => series.valueUnit },
  {
    header: 'Used',
    width: 8,
    type: 'text',
    value: ({ observation }) => (observation.excluded ? 'no' : 'yes'),
  },
  {
    header: 'Exclusion reason',
    width: 50,
    type: 'text',
    value: ({ observation }) => observation.excluded?.reason,
  },
  { header: 'Source cell', type: 'text', value: ({ observation }) => observation.source?.cell },
];

function* dataRows(run: AnalysisRunRecord): Generator<DataRow> {
  for (const series of run.series) {
    for (const [index, observation] of series.observations.entries()) yield { series, observation, index };
  }
}

/** The cell's text of a result reported below a limit ("<LOQ"); its Value is then the limit or 0. */
const REPORTED_AS: ExportColumn<DataRow> = {
  header: 'Reported as',
  width: 14,
  type: 'text',
  value: ({ observation }) => observation.censored?.text,
};

export function dataSheet(run: AnalysisRunRecord): PlannedSheet {
  // The column is there only when a result was reported below a limit, so other exports are unchanged.
  const censored = run.series.some((series) =>
    series.observations.some((observation) => observation.censored),
  );
  const columns = censored
    ? [...DATA_COLUMNS.slice(0, 7), REPORTED_AS, ...DATA_COLUMNS.slice(7)]
    : DATA_COLUMNS;
  return planSheet({ name: 'Data', columns, rows: () => dataRows(run) });
}

interface MethodRow {
  text: string;
  style?: RowStyle;
}

const METHOD_COLUMNS: readonly ExportColumn<MethodRow>[] = [
  { header: 'Method statement', width: 140, type: 'text', value: ({ text }) => text },
];

/** The method statement one paragraph per row, then a blank row and the caution in italics. */
export function methodStatementSheet(run: AnalysisRunRecord): PlannedSheet {
  const paragraph: RowStyle = { alignment: { wrapText: true, vertical: 'top' } };
  const rows: MethodRow[] = [
    ...run.methodStatement.split(/\n\n+/).map((text) => ({ text, style: paragraph })),
    { text: '' },
    { text: CAUTION, style: { font: { italic: true } } },
  ];
  return planSheet({
    name: 'Method statement',
    columns: METHOD_COLUMNS,
    rows: () => rows,
    rowStyle: (row) => row.style,
  });
}
