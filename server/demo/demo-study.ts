import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import type { ColumnMappingInput } from '../../shared/intake/column-mapping.ts';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import type { Series } from '../../shared/kinetics/types.ts';
import { excludePoint, runAnalysis } from '../features/analysis/index.ts';
import { readWorkbook, seriesSha256 } from '../features/intake/index.ts';
import { appendAuditEvent } from '../platform/audit/audit-trail.ts';
import type { Executor, Transaction } from '../platform/db/client.ts';
import { datasets, studies, uploads, users } from '../platform/db/schema/index.ts';
import { DEMO_ACCOUNTS } from './demo-accounts.ts';

/**
 * The demo stability study of the invented "Brackenfold Laboratories (demo)": a fictional tablet,
 * three batches at the long-term condition 25 °C/60 % RH and at 40, 50 and 60 °C, generated from a
 * first-order loss with Arrhenius temperature dependence and normal measurement noise from a
 * seeded generator, so every `npm start` on a fresh database produces the same numbers.
 *
 * The data go the way a user's would: written as an .xlsx workbook, stored as the original upload
 * with its SHA-256, read back by the real intake (`readWorkbook`, `seriesFromGrid`) with a column
 * mapping, stored as a dataset, and analysed (order from the data), then once more with an excluded
 * point, so the screen shows a superseded run. The seed uses the four-attribute results workbook
 * of `demo-stability-results.ts`; tests use the assay-only workbook here (`ASSAY_DEMO_RECIPE`).
 *
 * Model (invented): C(t) = C0·exp(−k(T)·t), C0 = 100.4 % of label claim, k(25 °C) = 0.0016 /month,
 * Ea = 92 kJ/mol; noise SD 0.35 % of label claim; batch-to-batch C0 and k differ slightly.
 */

export const DEMO_PRODUCT = 'Quillatrine 40 mg film-coated tablets';
export const DEMO_BATCHES = ['QT-2401', 'QT-2402', 'QT-2403'] as const;
export const DEMO_WORKBOOK_NAME = 'quillatrine-stability-2024.xlsx';
const SHEET = 'Stability results';

const GAS_CONSTANT = 8.314462618;
const ACTIVATION_ENERGY = 92_000;
const RATE_AT_25C = 0.0016;
const NOISE_SD = 0.35;

/** Pull points in months per storage temperature (ICH Q1A(R2)-like schedule, shortened for hot conditions). */
const SCHEDULE: Record<number, number[]> = {
  25: [0, 3, 6, 9, 12, 18, 24, 36],
  40: [0, 1, 2, 3, 6],
  50: [0, 0.5, 1, 2, 3],
  60: [0, 0.25, 0.5, 1, 1.5, 2],
};

export interface DemoRow {
  batch: string;
  temperatureC: number;
  month: number;
  assay: number;
}

/** Mulberry32: a small, well-known 32-bit generator; enough for invented demo noise. */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

/** Standard normal deviates by the Box–Muller transform. */
export function normalDeviates(random: () => number): () => number {
  return () => {
    const u = Math.max(random(), Number.EPSILON);
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
  };
}

/** The demo results, rounded to 0.1 % as a laboratory reports assay. Deterministic. */
export function demoStabilityRows(seed = 20_240_117): DemoRow[] {
  const normal = normalDeviates(seededRandom(seed));
  const rows: DemoRow[] = [];
  DEMO_BATCHES.forEach((batch, batchIndex) => {
    const initial = 100.4 + [0.2, -0.3, 0.1][batchIndex]!;
    const batchFactor = [1, 1.08, 0.94][batchIndex]!;
    for (const [temperatureText, months] of Object.entries(SCHEDULE)) {
      const temperatureC = Number(temperatureText);
      const kelvin = temperatureC + 273.15;
      const k =
        RATE_AT_25C * batchFactor * Math.exp((-ACTIVATION_ENERGY / GAS_CONSTANT) * (1 / kelvin - 1 / 298.15));
      for (const month of months) {
        const assay = initial * Math.exp(-k * month) + NOISE_SD * normal();
        rows.push({ batch, temperatureC, month, assay: Math.round(assay * 10) / 10 });
      }
    }
  });
  return rows;
}

/** The demo results as the workbook a laboratory might keep: one sheet, a title row, a header row. */
export async function demoWorkbook(rows: readonly DemoRow[] = demoStabilityRows()): Promise<Buffer> {
  const workbook = new ExcelJS.Workbook();
  workbook.creator = 'Rateledger demo seed';
  workbook.created = new Date(Date.UTC(2024, 0, 17));
  workbook.modified = workbook.created;
  const sheet = workbook.addWorksheet(SHEET);
  sheet.addRow([`${DEMO_PRODUCT} — stability results (invented demo data)`]);
  sheet.addRow(['Batch', 'Storage (°C)', 'Time (months)', 'Assay (% of label claim)']);
  for (const row of rows) sheet.addRow([row.batch, row.temperatureC, row.month, row.assay]);
  sheet.getColumn(1).width = 12;
  sheet.getColumn(2).width = 14;
  sheet.getColumn(3).width = 15;
  sheet.getColumn(4).width = 24;
  return Buffer.from(await workbook.xlsx.writeBuffer());
}

export const DEMO_MAPPING: ColumnMappingInput = {
  sheet: SHEET,
  headerRow: 2,
  timeColumn: 'Time (months)',
  timeUnit: 'month',
  valueColumn: 'Assay (% of label claim)',
  valueUnit: '% of label claim',
  seriesColumn: 'Batch',
  temperatureColumn: 'Storage (°C)',
};

export interface DemoContext {
  organisationId: number;
  analystUserId: number;
  analystName: string;
}

/** A demo study's values, its workbook and the mapping that reads it. */
export interface DemoStudyRecipe {
  study: Omit<typeof studies.$inferInsert, 'organisationId' | 'createdBy'>;
  fileName: string;
  workbook: () => Promise<Buffer>;
  mapping: ColumnMappingInput;
}

/** The assay-only demo study: one attribute, the workbook of `demoWorkbook` (tests use it). */
export const ASSAY_DEMO_RECIPE: DemoStudyRecipe = {
  study: {
    title: 'Quillatrine 40 mg — registration stability (demo)',
    product: DEMO_PRODUCT,
    attribute: 'Assay',
    unit: '% of label claim',
    direction: 'decreasing',
    lowerLimit: 95,
    upperLimit: 105,
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
      'Invented demo statements: assay fell more than 5 % within 6 months at 40 °C (accelerated report AR-QT-07); supporting data from development batches QT-D01 to QT-D03.',
    batches: [...DEMO_BATCHES],
    notes: 'Invented demo data: long-term 25 °C/60 % RH, accelerated 40 °C, stress conditions 50 and 60 °C.',
  },
  fileName: DEMO_WORKBOOK_NAME,
  workbook: () => demoWorkbook(),
  mapping: DEMO_MAPPING,
};

/**
 * A demo study, its original workbook (upload) and the dataset read from it by the real intake,
 * with audit events; no analysis yet. Used by the seed and by tests that need a realistic dataset
 * (the assay-only study unless another recipe is given).
 */
export async function createDemoDataset(
  db: Executor,
  context: DemoContext,
  recipe: DemoStudyRecipe = ASSAY_DEMO_RECIPE,
): Promise<{ studyId: number; uploadId: number; datasetId: number; series: Series[] }> {
  const actor = { actorUserId: context.analystUserId, actorLabel: context.analystName };
  return db.transaction(async (tx) => {
    const [study] = await tx
      .insert(studies)
      .values({ ...recipe.study, organisationId: context.organisationId, createdBy: context.analystUserId })
      .returning();
    await appendAuditEvent(tx, {
      organisationId: context.organisationId,
      ...actor,
      action: 'study.created',
      recordType: 'study',
      recordId: study!.id,
      after: study,
    });
    const content = await recipe.workbook();
    const [upload] = await tx
      .insert(uploads)
      .values({
        organisationId: context.organisationId,
        studyId: study!.id,
        fileName: recipe.fileName,
        mediaType: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
        format: 'xlsx',
        sizeBytes: content.length,
        sha256: createHash('sha256').update(content).digest('hex'),
        content,
        uploadedBy: context.analystUserId,
      })
      .returning({ id: uploads.id, sha256: uploads.sha256 });
    await appendAuditEvent(tx, {
      organisationId: context.organisationId,
      ...actor,
      action: 'upload.stored',
      recordType: 'upload',
      recordId: upload!.id,
      after: {
        studyId: study!.id,
        fileName: recipe.fileName,
        format: 'xlsx',
        sizeBytes: content.length,
        sha256: upload!.sha256,
      },
    });
    const mapping = columnMappingSchema.parse(recipe.mapping);
    const intake = seriesFromGrid(await readWorkbook(content), mapping);
    if (!intake.ok)
      throw new Error(`demo workbook does not read: ${JSON.stringify(intake.problems.slice(0, 3))}`);
    const pointCount = intake.series.reduce((sum, series) => sum + series.observations.length, 0);
    const [dataset] = await tx
      .insert(datasets)
      .values({
        organisationId: context.organisationId,
        studyId: study!.id,
        uploadId: upload!.id,
        mapping,
        series: intake.series,
        pointCount,
        sha256: seriesSha256(intake.series),
        createdBy: context.analystUserId,
      })
      .returning({ id: datasets.id });
    await appendAuditEvent(tx, {
      organisationId: context.organisationId,
      ...actor,
      action: 'dataset.imported',
      recordType: 'dataset',
      recordId: dataset!.id,
      after: { uploadId: upload!.id, uploadSha256: upload!.sha256, mapping, pointCount },
    });
    return { studyId: study!.id, uploadId: upload!.id, datasetId: dataset!.id, series: intake.series };
  });
}

/** Creates the demo study with its upload, dataset and analysis runs, inside the seed's transaction. */
export async function seedDemoStudy(
  tx: Transaction,
  organisation: { organisationId: number },
  recipe: DemoStudyRecipe = ASSAY_DEMO_RECIPE,
): Promise<{ studyId: number; datasetId: number; runIds: number[] }> {
  const analystEmail = DEMO_ACCOUNTS.find((account) => account.roles.includes('analyst'))?.email ?? '';
  const [analyst] = await tx.select().from(users).where(eq(users.email, analystEmail));
  if (!analyst) throw new Error(`the demo analyst ${analystEmail} is missing`);
  const context = {
    organisationId: organisation.organisationId,
    analystUserId: analyst.id,
    analystName: `${analyst.fullName} (demo seed)`,
  };
  const { studyId, datasetId, series } = await createDemoDataset(tx, context, recipe);
  const actor = { userId: context.analystUserId, label: context.analystName };
  const base = { organisationId: context.organisationId, datasetId, actor };
  // The order from the data (each attribute's own, or its protocol's working order where the data
  // name none), then the same with the cracked vial's result excluded: a superseded run to show.
  const fromData = await runAnalysis(tx, base);
  const runIds = [fromData.runId];
  // The assay series of the batch (the attribute is named when the workbook holds several).
  const cracked = series.find(
    (entry) =>
      entry.batch === 'QT-2402' &&
      entry.temperatureC === 40 &&
      (entry.attribute === undefined || entry.attribute === 'Assay'),
  );
  if (cracked) {
    const superseding = await excludePoint(tx, {
      organisationId: context.organisationId,
      runId: fromData.runId,
      request: {
        seriesId: cracked.id,
        observationIndex: 2,
        reason:
          'Demo: vial found cracked at the 2-month pull (invented deviation DV-0417); result not representative.',
      },
      actor,
    });
    runIds.push(superseding.runId);
  }
  return { studyId, datasetId, runIds };
}
