/**
 * Temperature-log assessments attached to a report version, as the report prints them: one entry
 * per assessment with its provenance (file, SHA-256, who assessed it and when), a summary table,
 * its excursions and gaps, and — when a study priced the log — what the log cost the product; and
 * the assessment's figure exactly as it was drawn when the log was assessed (stored, never redrawn).
 *
 * Template authors read `temperatureLogs[]` (documented in report-context-variables.ts) and print
 * each figure with `{{figure figureId}}`.
 */

import type { StoredTemperatureLogResult } from '../../../../shared/api/temperature-logs.ts';
import { formatSignificant } from '../../../../shared/figures/significant-figures.ts';
import type { Estimate } from '../../../../shared/kinetics/temperature/excursion-impact.ts';
import type { ReportTable } from './template-helpers.ts';

/** One attached assessment as the render job reads it from its write-once records. */
export interface AttachedTemperatureLog {
  id: number;
  title: string;
  fileName: string;
  sha256: string;
  createdAt: Date;
  createdByName: string;
  engineVersion: string;
  result: StoredTemperatureLogResult;
  figureSvg: string;
}

/** A figure drawn before printing: its SVG goes into the report as stored. */
export interface StoredFigure {
  id: string;
  title: string;
  description: string;
  svg: string;
}

const celsius = (value: number) => `${value.toFixed(2)} °C`;
const plain = (value: number) => formatSignificant(value, 4);
const iso = (at: string | undefined | null) => (at ? `${at.slice(0, 16).replace('T', ' ')} UTC` : '');

function estimate(value: Estimate | null, format: (v: number) => string): string {
  if (value === null) return 'not predicted';
  return value.interval
    ? `${format(value.estimate)} (${format(value.interval[0])} to ${format(value.interval[1])})`
    : format(value.estimate);
}

function pairs(caption: string, rows: [string, string][]): ReportTable {
  return {
    caption,
    columns: [
      { key: 'what', label: 'Quantity' },
      { key: 'value', label: 'Value' },
    ],
    rows: rows.map(([what, value]) => ({ what, value })),
  };
}

export function reportTemperatureLogs(attached: readonly AttachedTemperatureLog[]) {
  const figures: StoredFigure[] = [];
  const entries = attached.map((log, index) => {
    const doc = log.result;
    const unit = doc.timeUnit;
    const when = (time: number, at?: string) => (at ? iso(at) : `${plain(time)} ${unit}`);
    const figureId = `temperature-log-${log.id}`;
    figures.push({
      id: figureId,
      title: `Temperature log: ${log.title}`,
      description:
        'Temperature against time, drawn when the log was assessed; triangles mark readings outside the labelled range, dashed lines the range, and the line breaks at each gap.',
      svg: log.figureSvg,
    });
    const range = doc.range
      ? `${doc.range.minC === null ? 'no lower limit' : celsius(doc.range.minC)} to ${doc.range.maxC === null ? 'no upper limit' : celsius(doc.range.maxC)}`
      : 'not given';
    const impact = doc.impact;
    return {
      number: index + 1,
      id: log.id,
      title: log.title,
      fileName: log.fileName,
      sha256: log.sha256,
      assessedAt: log.createdAt,
      assessedBy: log.createdByName,
      engineVersion: log.engineVersion,
      figureId,
      summary: pairs(
        `Temperature log ${log.id}: mean kinetic temperature, extremes and time outside the range`,
        [
          [
            'Readings',
            `${doc.readings} from ${when(0, doc.startAt ?? undefined)} to ${when(doc.duration, doc.endAt ?? undefined)}`,
          ],
          ['Mean kinetic temperature, whole log', celsius(doc.mktC)],
          [
            doc.window ? `Highest MKT over ${plain(doc.window.length)} ${unit}` : 'Highest window MKT',
            doc.warmestWindow
              ? `${celsius(doc.warmestWindow.mktC)} from ${when(doc.warmestWindow.start, doc.warmestWindow.startAt)}`
              : 'none: the log is shorter than one window',
          ],
          ['Minimum and maximum', `${celsius(doc.minC)} and ${celsius(doc.maxC)}`],
          ['Labelled range', range],
          [
            'Time outside the range',
            doc.timeAbove === null
              ? 'not assessed'
              : `${plain(doc.timeAbove)} ${unit} above, ${plain(doc.timeBelow ?? 0)} ${unit} below`,
          ],
        ],
      ),
      excursions: {
        caption: `Temperature log ${log.id}: excursions`,
        columns: [
          { key: 'side', label: 'Side' },
          { key: 'from', label: 'From' },
          { key: 'duration', label: 'Duration', align: 'right' as const },
          { key: 'peak', label: 'Peak' },
        ],
        rows: doc.excursions.map((excursion) => ({
          side: excursion.side === 'above' ? 'above the range' : 'below the range',
          from: when(excursion.start, excursion.startAt),
          duration: `${plain(excursion.duration)} ${unit}`,
          peak: `${celsius(excursion.peakC)} at ${when(excursion.peakTime, excursion.peakAt)}`,
        })),
        empty: 'No reading lies outside the labelled range (or no range was given).',
      } satisfies ReportTable,
      gaps: {
        caption: `Temperature log ${log.id}: gaps (reported, not bridged)`,
        columns: [
          { key: 'from', label: 'Last reading before' },
          { key: 'to', label: 'First reading after' },
          { key: 'length', label: 'Length', align: 'right' as const },
        ],
        rows: doc.gaps.map((gap) => ({
          from: when(gap.start, gap.startAt),
          to: when(gap.end, gap.endAt),
          length: `${plain(gap.duration)} ${unit}`,
        })),
        empty: 'None.',
      } satisfies ReportTable,
      impact: impact
        ? pairs(
            `Temperature log ${log.id}: what the log cost ${impact.source.product} (Arrhenius fit of analysis ${impact.source.analysisRunId}, ${Math.round(impact.confidence * 100)} % intervals)`,
            [
              ['Storage temperature of the study', `${impact.storageTemperatureC} °C`],
              ['Time the readings cover', `${plain(impact.loggedDuration)} ${unit}`],
              [
                `Equivalent time at ${impact.storageTemperatureC} °C`,
                estimate(impact.equivalentDuration, (v) => `${plain(v)} ${unit}`),
              ],
              [
                `Predicted change of ${impact.source.attribute}`,
                impact.predictedChangePercent
                  ? `${estimate(impact.predictedChangePercent, plain)} % of the value at the start`
                  : estimate(impact.predictedChange, (v) => `${plain(v)} ${impact.source.unit}`),
              ],
              ...(impact.margin
                ? ([
                    [
                      'Margin to the limit before the log',
                      `${plain(impact.margin.before)} ${impact.source.unit}`,
                    ],
                    [
                      'Margin left after the log',
                      estimate(impact.margin.after, (v) => `${plain(v)} ${impact.source.unit}`),
                    ],
                  ] as [string, string][])
                : []),
            ],
          )
        : null,
      impactNotes: impact
        ? [
            ...impact.notes,
            ...(impact.extrapolation.belowC !== null || impact.extrapolation.aboveC !== null
              ? [
                  `The log reaches temperatures outside the fitted range (${impact.source.fittedRangeC[0]}–${impact.source.fittedRangeC[1]} °C): there the straight Arrhenius line is an assumption the study's data cannot check.`,
                ]
              : []),
          ]
        : [],
      method: doc.method,
    };
  });
  return { entries, figures };
}

export type ReportTemperatureLog = ReturnType<typeof reportTemperatureLogs>['entries'][number];
