import type { Writable } from 'node:stream';
import { resultRows } from '../../../shared/figures/results-table.ts';
import { csvTable } from '../../platform/export/csv-writer.ts';
import { planSheet, writeWorkbook } from '../../platform/export/workbook-writer.ts';
import {
  ATTRIBUTE_RESULT_COLUMNS,
  attributeResultRows,
  attributeSheets,
} from './analysis-attributes-sheet.ts';
import { figureDataSheet } from './analysis-figure-data-sheet.ts';
import { fitSheets } from './analysis-fit-sheets.ts';
import { proposalSheet } from './analysis-proposal-sheet.ts';
import { aboutSheet, dataSheet, methodStatementSheet } from './analysis-record-sheets.ts';
import { RESULT_COLUMNS } from './analysis-result-columns.ts';
import type { AnalysisRunRecord } from './analysis-runs.ts';
import { temperatureSheet } from './analysis-temperature-sheet.ts';

/**
 * The exports of an analysis run: an .xlsx workbook (data used and excluded, fits per series and
 * model, derived figures, Arrhenius and Q1E results, the shelf-life proposal, the figures' data, the method statement and
 * the caution) and a CSV of the tidy results table. Both are written from the stored result through
 * `resultRows`, like the screen, so every number matches what the analysis page shows; numbers are
 * stored as numbers (full double precision), never as text. Each sheet is a list of column
 * definitions in its own module; the writers in `server/platform/export/` quote, stream and guard
 * text against formula injection the same way for every export.
 */

export function exportFileName(run: AnalysisRunRecord, extension: 'xlsx' | 'csv'): string {
  const product =
    run.study.product
      .replace(/[^A-Za-z0-9]+/g, '-')
      .replace(/^-|-$/g, '')
      .slice(0, 40) || 'study';
  return `rateledger-analysis-${run.id}-${product}.${extension}`;
}

/** Writes the workbook to `stream` (the HTTP response, or a buffer for tests). */
export async function writeAnalysisWorkbook(run: AnalysisRunRecord, stream: Writable): Promise<void> {
  const { analysis } = run.result;
  const sheets = [
    aboutSheet(run),
    planSheet({ name: 'Results', columns: RESULT_COLUMNS, rows: () => resultRows(analysis) }),
    dataSheet(run),
    ...fitSheets(analysis),
    temperatureSheet(run),
    proposalSheet(run),
    // Issue 15 §1: present only for a run of several attributes.
    ...attributeSheets(run),
    figureDataSheet(run),
    methodStatementSheet(run),
  ];
  await writeWorkbook(sheets, { creator: 'Rateledger', created: run.runAt, modified: run.runAt }, stream);
}

/**
 * The tidy results table as CSV (RFC 4180, CRLF), columns named by their keys, UTF-8 with a
 * byte-order mark so spreadsheet programs read "°".
 */
export function analysisCsv(run: AnalysisRunRecord): string {
  // A run of several attributes lists every attribute's rows, each naming its attribute (issue 15 §1).
  if (run.result.otherAttributes?.length)
    return csvTable(ATTRIBUTE_RESULT_COLUMNS, attributeResultRows(run, true), { byteOrderMark: true });
  return csvTable(RESULT_COLUMNS, resultRows(run.result.analysis), { byteOrderMark: true });
}
