import { PassThrough } from 'node:stream';
import ExcelJS from 'exceljs';
import { confidenceBands, type StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import { analyseDataset } from '../../../shared/kinetics/analyse-dataset.ts';
import { type StudyAttribute, studyAttributes } from '../../../shared/kinetics/stability/study-attributes.ts';
import type {
  AttributeShelfLife,
  MassBalance,
  StudyShelfLife,
} from '../../../shared/kinetics/stability/study-shelf-life-types.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import type { studies } from '../../platform/db/schema/index.ts';
import { writeAnalysisWorkbook } from './analysis-export.ts';
import { type AnalysisRunRecord, engineOptions } from './analysis-runs.ts';

/**
 * Test data for the analysis page and exports (not used by the product): an invented study of
 * "Fictolin 10 mg" (assay, first attribute; "Impurity B", second) at 25 °C, three batches, with
 * the Impurity B results at time 0 reported "<LOQ". The engine runs per attribute as the
 * multi-attribute contract states; the study's shelf life and the mass balance are literals built
 * from those analyses here, since their producer is another module. All values invented.
 */

type Study = typeof studies.$inferSelect;

const TIMES = [0, 3, 6, 9, 12, 18];
const BATCHES = ['FX-01', 'FX-02', 'FX-03'];
/** Small fixed scatter, so the fits have residuals (invented). */
const WOBBLE = [0.12, -0.08, 0.05, -0.1, 0.07, -0.04];

export const IMPURITY: StudyAttribute = {
  name: 'Impurity B',
  unit: '%',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 0.5,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: 'degradant',
};

export function fixtureStudy(multi: boolean): Study {
  const at = new Date('2026-01-05T09:00:00Z');
  return {
    id: 7,
    organisationId: 1,
    title: 'Fictolin 10 mg — stability (invented)',
    product: 'Fictolin 10 mg',
    attribute: 'Assay',
    unit: '%',
    direction: 'decreasing',
    lowerLimit: 95,
    upperLimit: null,
    storageTemperatureC: 25,
    storageHumidityPercent: 60,
    storageCategory: 'room-temperature',
    intermediateTemperatureC: null,
    acceleratedTemperatureC: 40,
    acceleratedChange: 'none',
    intermediateChange: 'unknown',
    littleChange: 'no',
    supportingData: 'yes',
    declarationBasis: '',
    workingOrder: null,
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: multi ? 'assay' : null,
    additionalAttributes: multi ? [IMPURITY] : [],
    batches: BATCHES,
    notes: '',
    createdBy: 1,
    createdAt: at,
    updatedAt: at,
  } as Study;
}

/** Assay series (ids as a one-attribute dataset names them, or prefixed in a multi-attribute one). */
export function fixtureSeries(multi: boolean): Series[] {
  const assay = BATCHES.map((batch, b) => ({
    id: multi ? `Assay · ${batch} @ 25 °C` : `${batch} @ 25 °C`,
    batch,
    temperatureC: 25,
    timeUnit: 'month',
    valueUnit: '%',
    ...(multi ? { attribute: 'Assay' } : {}),
    observations: TIMES.map((time, i) => ({
      time,
      value: 100.2 - (0.18 + 0.01 * b) * time + WOBBLE[(i + b) % WOBBLE.length]!,
      source: { cell: `Sheet1!C${2 + b * TIMES.length + i}` },
    })),
  }));
  if (!multi) return assay;
  const impurity = BATCHES.map((batch, b) => ({
    id: `Impurity B · ${batch} @ 25 °C`,
    batch,
    temperatureC: 25,
    timeUnit: 'month',
    valueUnit: '%',
    attribute: 'Impurity B',
    observations: TIMES.map((time, i) =>
      i === 0
        ? {
            time,
            value: 0.05,
            censored: { text: '<LOQ', limit: 0.05 },
            // The study's rule 'exclude', as the contract words it.
            excluded: {
              reason: 'reported below the limit (<LOQ): excluded from the fit by the study’s rule',
            },
            source: { cell: `Sheet1!D${2 + b * TIMES.length + i}` },
          }
        : {
            time,
            value: 0.04 + (0.021 + 0.002 * b) * time + WOBBLE[(i + b) % WOBBLE.length]! / 20,
            source: { cell: `Sheet1!D${2 + b * TIMES.length + i}` },
          },
    ),
  }));
  return [...assay, ...impurity];
}

function longTerm(attribute: StudyAttribute, result: StoredAnalysisResult['analysis']): AttributeShelfLife {
  const condition = (result.shelfLife ?? []).find((entry) => entry.role === 'long-term');
  const proposal = condition?.proposal;
  return {
    attribute,
    proposedShelfLife: proposal?.proposedShelfLife ?? null,
    proposedShelfLifeMonths: proposal?.proposedShelfLifeMonths ?? null,
    timeUnit: 'month',
    reason: proposal?.proposedReason ?? (proposal ? null : 'no long-term condition'),
    statement: proposal?.statement ?? 'No long-term condition.',
    limiting: false,
  };
}

/** A run record as `getAnalysisRun` returns it, without a database. */
export function fixtureRun(multi: boolean): AnalysisRunRecord {
  const study = fixtureStudy(multi);
  const attributes = studyAttributes(study);
  const series = fixtureSeries(multi);
  const options = { confidenceLevel: 0.95, errorModel: 'auto' as const };
  const analysed = attributes.map((attribute) => {
    const own = series.filter((entry) => (entry.attribute ?? 'Assay') === attribute.name);
    const settings = engineOptions(options, {
      ...study,
      lowerLimit: attribute.lowerLimit,
      upperLimit: attribute.upperLimit,
      direction: attribute.direction,
    });
    const analysis = analyseDataset(own, settings);
    return { attribute, analysis, confidenceBands: confidenceBands(analysis, own, settings), settings };
  });
  const [first, ...others] = analysed;
  const result: StoredAnalysisResult = { analysis: first!.analysis, confidenceBands: first!.confidenceBands };
  if (multi) {
    result.otherAttributes = others.map(({ attribute, analysis, confidenceBands: bands }) => ({
      attribute,
      analysis,
      confidenceBands: bands,
    }));
    result.studyShelfLife = fixtureStudyShelfLife(
      analysed.map((entry) => longTerm(entry.attribute, entry.analysis)),
    );
    result.massBalance = fixtureMassBalance();
  }
  return {
    id: 41,
    organisationId: 1,
    studyId: study.id,
    studyTitle: study.title,
    study,
    studyStanding: {
      versionNumber: 1,
      origin: 'with-run',
      recordedAt: new Date('2026-01-05T09:00:00Z'),
      changedSince: [],
    },
    datasetId: 12,
    datasetSha256: 'a'.repeat(64),
    options: { analyst: options, engine: first!.settings },
    exclusions: [],
    engineVersion: 'fixture',
    result,
    methodStatement: first!.analysis.methodStatement.text,
    supersedesRunId: null,
    supersededByRunId: null,
    runBy: { id: 1, fullName: 'Test analyst' },
    runAt: new Date('2026-01-06T10:00:00Z'),
    series,
  };
}

/** The minimum across attributes (contract rule), with the limiting attribute marked. */
export function fixtureStudyShelfLife(entries: AttributeShelfLife[]): StudyShelfLife {
  const proposed = entries.map((entry) => entry.proposedShelfLife);
  const none = entries.find((entry) => entry.proposedShelfLife === null);
  const minimum = none ? null : Math.min(...(proposed as number[]));
  const attributes = entries.map((entry) => ({
    ...entry,
    limiting: minimum !== null && entry.proposedShelfLife === minimum,
  }));
  const limitingAttributes = attributes
    .filter((entry) => entry.limiting)
    .map((entry) => entry.attribute.name);
  return {
    attributes,
    limitingAttributes,
    proposedShelfLife: minimum,
    proposedShelfLifeMonths: minimum,
    timeUnit: 'month',
    reason: none ? `${none.attribute.name} proposes no shelf life: ${none.reason}` : null,
    statement:
      minimum === null
        ? `No shelf life is proposed for the study: ${none!.attribute.name} proposes none.`
        : `Proposed shelf life of the study: ${minimum} months, set by ${limitingAttributes.join(' and ')} (the earliest of the attributes, ICH Q1E Appendix A).`,
  };
}

export function fixtureMassBalance(): MassBalance {
  return {
    assayAttribute: 'Assay',
    degradantAttributes: ['Impurity B'],
    unit: '%',
    timeUnit: 'month',
    series: [
      {
        batch: 'FX-01',
        temperatureC: 25,
        points: [
          { time: 0, assay: 100.3, degradants: 0, total: 100.3, percentOfInitial: 100 },
          { time: 6, assay: 99.2, degradants: 0.17, total: 99.37, percentOfInitial: 99.07278 },
          { time: 12, assay: 98.1, degradants: 0.29, total: 98.39, percentOfInitial: 98.09571 },
        ],
        trend: { slope: -0.159, lower: -0.21, upper: -0.108, confidenceLevel: 0.95 },
      },
      {
        batch: 'FX-02',
        temperatureC: 25,
        points: [
          { time: 0, assay: 100.1, degradants: 0, total: 100.1, percentOfInitial: 100 },
          { time: 6, assay: 99.0, degradants: 0.18, total: 99.18, percentOfInitial: 99.08092 },
        ],
        trend: null,
      },
    ],
    statement:
      'Mass balance (Assay plus Impurity B against the initial total): within 2 % of the initial value at every pull. Results reported below the limit count as 0 under the study’s rule “exclude”.',
  };
}

/** The workbook export of a run, as bytes. */
export async function workbookBytes(run: ReturnType<typeof fixtureRun>): Promise<Buffer> {
  const stream = new PassThrough();
  const chunks: Buffer[] = [];
  stream.on('data', (chunk: Buffer) => chunks.push(chunk));
  await writeAnalysisWorkbook(run, stream);
  return Buffer.concat(chunks);
}

/** Every sheet's name and every cell's value and number format, in order. */
export async function workbookCells(bytes: Buffer): Promise<unknown[]> {
  const workbook = new ExcelJS.Workbook();
  await workbook.xlsx.load(bytes as unknown as ArrayBuffer);
  return workbook.worksheets.map((sheet) => {
    const rows: unknown[] = [];
    sheet.eachRow({ includeEmpty: true }, (row) => {
      const cells: unknown[] = [];
      row.eachCell({ includeEmpty: true }, (cell) => cells.push([cell.value, cell.numFmt ?? null]));
      rows.push(cells);
    });
    return [sheet.name, rows];
  });
}
