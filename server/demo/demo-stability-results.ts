import ExcelJS from 'exceljs';
import type { StudyAttribute } from '../../shared/kinetics/stability/study-attributes.ts';
import {
  DEMO_BATCHES,
  DEMO_PRODUCT,
  type DemoStudyRecipe,
  normalDeviates,
  seededRandom,
} from './demo-study.ts';

/**
 * The demo study's full results workbook: every pull of the invented Quillatrine batches tested
 * for four attributes, as a laboratory's results sheet holds them — one row per batch, condition
 * and pull, one column per attribute (the "wide" layout). Degradation products below the
 * reporting threshold are written as the laboratory writes them ("<0.05").
 *
 * Model (invented, deterministic from a seeded generator):
 * - assay: C(t) = C0·exp(−k(T)·t), C0 ≈ 100.4 % of label claim, k(25 °C) = 0.0016 /month,
 *   Ea = 92 kJ/mol (the same kinetics as the assay-only demo dataset of `demo-study.ts`);
 * - the assay lost becomes degradation product QX-A (55 %) and QX-B (30 %); the remaining 15 %
 *   goes to products the method does not see, so the mass balance drifts slightly below 100 %;
 * - water rises by zero-order uptake through the blister, 0.018 % w/w per month at 25 °C and
 *   faster when warmer (Ea 45 kJ/mol), from 1.6 % w/w.
 * Noise SDs: assay 0.35, QX-A 0.012, QX-B 0.008 (% of label claim), water 0.05 % w/w. Results are
 * rounded as reported: assay and water to 0.1, the products to 0.01 below 1 %; a product below
 * the reporting threshold of 0.05 % is written "<0.05".
 */

export const DEMO_RESULTS_WORKBOOK_NAME = 'quillatrine-stability-results-2024.xlsx';
export const DEMO_RESULTS_SHEET = 'Results by pull';
const REPORTING_THRESHOLD = 0.05;

const GAS_CONSTANT = 8.314462618;
const ASSAY_ACTIVATION_ENERGY = 92_000;
const WATER_ACTIVATION_ENERGY = 45_000;
const ASSAY_RATE_AT_25C = 0.0016;
const WATER_RATE_AT_25C = 0.018;

/** Pull points in months per storage temperature (as the assay-only demo). */
const SCHEDULE: Record<number, number[]> = {
  25: [0, 3, 6, 9, 12, 18, 24, 36],
  40: [0, 1, 2, 3, 6],
  50: [0, 0.5, 1, 2, 3],
  60: [0, 0.25, 0.5, 1, 1.5, 2],
};

/** The column headers of the results sheet, in order. */
export const DEMO_RESULT_COLUMNS = {
  batch: 'Batch',
  temperature: 'Storage (°C)',
  time: 'Time (months)',
  assay: 'Assay (% LC)',
  qxA: 'Impurity QX-A (% LC)',
  qxB: 'Impurity QX-B (% LC)',
  water: 'Water (% w/w)',
} as const;

export interface DemoResultRow {
  batch: string;
  temperatureC: number;
  month: number;
  assay: number;
  /** A number, or the reported text "<0.05" below the reporting threshold. */
  qxA: number | string;
  qxB: number | string;
  water: number;
}

/** The demo study's attributes (invented specification of the fictional product). */
export const DEMO_ATTRIBUTES: readonly StudyAttribute[] = [
  {
    name: 'Assay',
    unit: '% of label claim',
    direction: 'decreasing',
    lowerLimit: 95,
    upperLimit: 105,
    workingOrder: null,
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: 'assay',
  },
  {
    name: 'Impurity QX-A',
    unit: '% of label claim',
    direction: 'increasing',
    lowerLimit: null,
    upperLimit: 2.0,
    workingOrder: 0,
    workingOrderReason:
      'Invented demo protocol SP-QT-02 §6: QX-A forms at a constant rate while assay loss is small.',
    censoredRule: 'stated-value',
    censoredValue: 0.025,
    massBalanceRole: 'degradant',
  },
  {
    name: 'Impurity QX-B',
    unit: '% of label claim',
    direction: 'increasing',
    lowerLimit: null,
    upperLimit: 1.5,
    workingOrder: 0,
    workingOrderReason: 'Invented demo protocol SP-QT-02 §6, as for QX-A.',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: 'degradant',
  },
  {
    name: 'Water',
    unit: '% w/w',
    direction: 'increasing',
    lowerLimit: null,
    upperLimit: 3.0,
    workingOrder: 0,
    workingOrderReason: 'Invented demo protocol SP-QT-02 §7: uptake through the blister at a constant rate.',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: null,
  },
];

const arrheniusFactor = (activationEnergy: number, temperatureC: number) =>
  Math.exp((-activationEnergy / GAS_CONSTANT) * (1 / (temperatureC + 273.15) - 1 / 298.15));

/** A degradation product as reported: "<0.05" below the threshold, else rounded to 0.01. */
function reported(level: number): number | string {
  if (level < REPORTING_THRESHOLD) return `<${REPORTING_THRESHOLD}`;
  return Math.round(level * 100) / 100;
}

/** The demo results, one row per batch, condition and pull. Deterministic. */
export function demoResultRows(seed = 20_240_301): DemoResultRow[] {
  const normal = normalDeviates(seededRandom(seed));
  const rows: DemoResultRow[] = [];
  DEMO_BATCHES.forEach((batch, batchIndex) => {
    const initial = 100.4 + [0.2, -0.3, 0.1][batchIndex]!;
    const batchFactor = [1, 1.08, 0.94][batchIndex]!;
    const initialWater = 1.6 + [0, 0.1, -0.05][batchIndex]!;
    for (const [temperatureText, months] of Object.entries(SCHEDULE)) {
      const temperatureC = Number(temperatureText);
      const k = ASSAY_RATE_AT_25C * batchFactor * arrheniusFactor(ASSAY_ACTIVATION_ENERGY, temperatureC);
      const waterRate = WATER_RATE_AT_25C * arrheniusFactor(WATER_ACTIVATION_ENERGY, temperatureC);
      for (const month of months) {
        const remaining = initial * Math.exp(-k * month);
        const lost = initial - remaining;
        const assay = remaining + 0.35 * normal();
        const qxA = 0.03 + 0.55 * lost + 0.012 * normal();
        const qxB = 0.01 + 0.3 * lost + 0.008 * normal();
        const water = initialWater + waterRate * month + 0.05 * normal();
        rows.push({
          batch,
          temperatureC,
          month,
          assay: Math.round(assay * 10) / 10,
          qxA: reported(qxA),
          qxB: reported(qxB),
          water: Math.round(water * 10) / 10,
        });
      }
    }
  });
  return rows;
}

/** The results as the laboratory's workbook: one sheet, a title row, a header row, one row per pull. */
export async function demoResultsWorkbook(
  rows: readonly DemoResultRow[] = demoResultRows(),
): Promise<Buffer> {
  const workbook = new ExcelJS.Workbook();
  workbook.creator = 'Rateledger demo seed';
  workbook.created = new Date(Date.UTC(2024, 2, 1));
  workbook.modified = workbook.created;
  const sheet = workbook.addWorksheet(DEMO_RESULTS_SHEET);
  sheet.addRow([`${DEMO_PRODUCT} — stability results by pull (invented demo data)`]);
  const c = DEMO_RESULT_COLUMNS;
  sheet.addRow([c.batch, c.temperature, c.time, c.assay, c.qxA, c.qxB, c.water]);
  for (const row of rows)
    sheet.addRow([row.batch, row.temperatureC, row.month, row.assay, row.qxA, row.qxB, row.water]);
  [12, 14, 15, 14, 22, 22, 15].forEach((width, index) => {
    sheet.getColumn(index + 1).width = width;
  });
  return Buffer.from(await workbook.xlsx.writeBuffer());
}

/**
 * The seeded demo study: the four attributes above, long-term 25 °C/60 % RH and accelerated
 * 40 °C/75 % RH with stress conditions at 50 and 60 °C, read from the results workbook in the
 * wide layout (one column per attribute).
 */
export const RESULTS_DEMO_RECIPE: DemoStudyRecipe = {
  study: {
    title: 'Quillatrine 40 mg — registration stability, all attributes (demo)',
    product: DEMO_PRODUCT,
    attribute: DEMO_ATTRIBUTES[0]!.name,
    unit: DEMO_ATTRIBUTES[0]!.unit,
    direction: DEMO_ATTRIBUTES[0]!.direction,
    lowerLimit: DEMO_ATTRIBUTES[0]!.lowerLimit,
    upperLimit: DEMO_ATTRIBUTES[0]!.upperLimit,
    censoredRule: DEMO_ATTRIBUTES[0]!.censoredRule,
    censoredValue: DEMO_ATTRIBUTES[0]!.censoredValue,
    massBalanceRole: DEMO_ATTRIBUTES[0]!.massBalanceRole,
    additionalAttributes: DEMO_ATTRIBUTES.slice(1),
    storageTemperatureC: 25,
    storageHumidityPercent: 60,
    // The Q1E declaration (invented): 25 °C long-term, 40 °C accelerated; 50 and 60 °C are
    // stress conditions for the kinetics only. No intermediate study, so its outcome stays
    // unknown — and the analysis names that assumption.
    storageCategory: 'room-temperature',
    acceleratedTemperatureC: 40,
    acceleratedChange: 'significant',
    littleChange: 'no',
    supportingData: 'yes',
    declarationBasis:
      'Invented demo statements: assay fell more than 5 % and QX-A exceeded its limit within 6 months at 40 °C (accelerated report AR-QT-07); supporting data from development batches QT-D01 to QT-D03.',
    batches: [...DEMO_BATCHES],
    notes:
      'Invented demo data: long-term 25 °C/60 % RH, accelerated 40 °C/75 % RH, stress conditions 50 and 60 °C. Degradation products below the reporting threshold (0.05 %) are reported as "<0.05".',
  },
  fileName: DEMO_RESULTS_WORKBOOK_NAME,
  workbook: () => demoResultsWorkbook(),
  mapping: {
    sheet: DEMO_RESULTS_SHEET,
    headerRow: 2,
    timeColumn: DEMO_RESULT_COLUMNS.time,
    timeUnit: 'month',
    valueColumn: DEMO_RESULT_COLUMNS.assay,
    valueUnit: DEMO_ATTRIBUTES[0]!.unit,
    valueAttribute: DEMO_ATTRIBUTES[0]!.name,
    moreValueColumns: [
      {
        column: DEMO_RESULT_COLUMNS.qxA,
        attribute: DEMO_ATTRIBUTES[1]!.name,
        unit: DEMO_ATTRIBUTES[1]!.unit,
      },
      {
        column: DEMO_RESULT_COLUMNS.qxB,
        attribute: DEMO_ATTRIBUTES[2]!.name,
        unit: DEMO_ATTRIBUTES[2]!.unit,
      },
      {
        column: DEMO_RESULT_COLUMNS.water,
        attribute: DEMO_ATTRIBUTES[3]!.name,
        unit: DEMO_ATTRIBUTES[3]!.unit,
      },
    ],
    seriesColumn: DEMO_RESULT_COLUMNS.batch,
    temperatureColumn: DEMO_RESULT_COLUMNS.temperature,
  },
};
