import { analysisFigures, type FigureSpec } from '../../../../shared/figures/analysis-figures.ts';
import { confidenceBands, type StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import { analyseDataset, type DatasetOptions } from '../../../../shared/kinetics/analyse-dataset.ts';
import type { Series } from '../../../../shared/kinetics/types.ts';
import { ENGINE_VERSION } from '../../../../shared/kinetics/version.ts';
import { reportFigures } from './render-report.ts';
import { buildReportContext, type ReportContext, type ReportContextInput } from './report-context.ts';

/**
 * An invented stability study for tests and the benchmark of the report pipeline: the fictional
 * product "Veltrazine 50 mg tablets", assay in % of label claim, two batches at the long-term
 * condition 25 °C / 60 % RH over 24 months and one batch at the accelerated 40 °C over 6 months,
 * losing assay by first-order kinetics (k ≈ 0.0015 per month at 25 °C, ≈ 0.0078 at 40 °C, an
 * activation energy near 85 kJ/mol) with fixed, made-up measurement scatter. One point is
 * excluded with a documented reason, so the report shows a deviation.
 *
 * Nothing here is real data; the analysis is the real engine (`analyseDataset`) on these points.
 *
 * Example: reportFixture().figures has five figures (Q1E at 25 °C, Arrhenius, three fitted-curve plots).
 */

const SCATTER = [0.21, -0.15, 0.08, -0.3, 0.12, -0.05, 0.18, -0.11];

function firstOrderSeries(
  id: string,
  batch: string,
  temperatureC: number,
  k: number,
  times: number[],
  start: number,
): Series {
  return {
    id,
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% label claim',
    observations: times.map((time, index) => ({
      time,
      value: Number((start * Math.exp(-k * time) + (SCATTER[index % SCATTER.length] as number)).toFixed(2)),
      source: {
        cell: `${batch === 'VZ-2401' && temperatureC === 40 ? 'Accelerated' : 'LongTerm'}!C${index + 2}`,
      },
    })),
  };
}

export const FIXTURE_LIMIT = 95;

export function fixtureSeries(): Series[] {
  const longTerm = [0, 3, 6, 9, 12, 18, 24];
  const a = firstOrderSeries('VZ-2401 @ 25 °C', 'VZ-2401', 25, 0.0015, longTerm, 100.4);
  const b = firstOrderSeries('VZ-2402 @ 25 °C', 'VZ-2402', 25, 0.0016, longTerm, 99.8);
  const excluded = b.observations[3]!;
  excluded.value = 97.1;
  excluded.excluded = { reason: 'Sample vial cracked in transit; retest recorded in deviation DV-0118.' };
  const c = firstOrderSeries('VZ-2401 @ 40 °C', 'VZ-2401', 40, 0.0078, [0, 1, 2, 3, 6], 100.4);
  return [a, b, c];
}

export const FIXTURE_OPTIONS: DatasetOptions = {
  confidenceLevel: 0.95,
  lowerLimit: FIXTURE_LIMIT,
  storageTemperatureC: 25,
  order: 1,
  q1e: {
    storage: 'room-temperature',
    acceleratedTemperatureC: 40,
    acceleratedChange: 'none',
    supportingData: 'yes',
  },
};

export interface ReportFixture {
  series: Series[];
  stored: StoredAnalysisResult;
  figures: FigureSpec[];
  input: ReportContextInput;
  context: ReportContext;
}

export function reportFixture(
  overrides: Partial<Pick<ReportContextInput, 'report' | 'timeZone'>> = {},
): ReportFixture {
  const series = fixtureSeries();
  const analysis = analyseDataset(series, FIXTURE_OPTIONS);
  const stored: StoredAnalysisResult = {
    analysis,
    confidenceBands: confidenceBands(analysis, series, FIXTURE_OPTIONS),
  };
  const figures = reportFigures(analysisFigures(stored, series, { lower: FIXTURE_LIMIT }));
  const input: ReportContextInput = {
    organisation: { name: 'Northfield Stability Laboratory', timeZone: 'Europe/Berlin' },
    study: {
      title: 'VZ-STAB-07 long-term and accelerated',
      product: 'Veltrazine 50 mg tablets',
      attribute: 'Assay',
      unit: '% label claim',
      direction: 'decreasing',
      lowerLimit: FIXTURE_LIMIT,
      upperLimit: null,
      storageTemperatureC: 25,
      storageHumidityPercent: 60,
      batches: ['VZ-2401', 'VZ-2402'],
      notes: '',
    },
    analysisRun: {
      id: 41,
      runAt: new Date('2026-11-30T09:12:00Z'),
      runBy: 'Analyst One',
      engineVersion: ENGINE_VERSION,
      datasetId: 17,
      datasetSha256: '3f6c1d0e9a8b7c6d5e4f30211f2e3d4c5b6a79881726354413f2e1d0c9b8a796',
      supersedesRunId: 40,
      result: stored,
      series,
    },
    figures,
    report: {
      number: 'RL-2026-0007',
      version: 1,
      author: 'Analyst One',
      createdAt: new Date('2026-12-01T14:05:00Z'),
      ...overrides.report,
    },
    ...(overrides.timeZone ? { timeZone: overrides.timeZone } : {}),
  };
  return { series, stored, figures, input, context: buildReportContext(input) };
}
