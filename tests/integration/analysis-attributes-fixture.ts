import { createHash } from 'node:crypto';
import { seriesSha256 } from '../../server/features/intake/index.ts';
import type { Executor } from '../../server/platform/db/client.ts';
import { datasets, studies, uploads } from '../../server/platform/db/schema/index.ts';
import type { StudyAttribute } from '../../shared/kinetics/stability/study-attributes.ts';
import type { Observation, Series } from '../../shared/kinetics/types.ts';

/**
 * Seeds for the multi-attribute analysis tests: a study with its further attributes written
 * straight into `additional_attributes`, and a dataset whose series name their attribute, inserted
 * as intake would store it (the study form and intake are changed elsewhere).
 *
 * Invented product "Corvalide 20 mg tablets": batches CV-01..CV-03 at 25 °C (long-term, months 0
 * to 18) and CV-01 at 40 °C (accelerated, months 0 to 6). Assay falls 0.15 % per month (lower limit
 * 95); Impurity B rises 0.03 % per month from below the quantitation limit ("<LOQ" at months 0 and
 * 3), upper limit 0.5 — its line reaches the limit near 16.7 months, long before the assay's;
 * Water rises 0.05 % w/w per month, upper limit 5.0.
 */
export const IMPURITY_B: StudyAttribute = {
  name: 'Impurity B',
  unit: '% of label claim',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 0.5,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: 'degradant',
};
export const WATER: StudyAttribute = {
  name: 'Water',
  unit: '% w/w',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 5,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
};

const SCATTER = [0.06, -0.05, 0.04, -0.07, 0.03, -0.02];
const LONG_TERM = [0, 3, 6, 9, 12, 18];
const ACCELERATED = [0, 1, 2, 3, 6];
const CONDITIONS = [
  ...['CV-01', 'CV-02', 'CV-03'].map((batch) => ({ batch, temperatureC: 25, times: LONG_TERM, rate: 1 })),
  { batch: 'CV-01', temperatureC: 40, times: ACCELERATED, rate: 4 },
];

/** One attribute's series; `name` null gives the untagged ids of a one-attribute dataset. */
export function attributeSeries(
  name: string | null,
  valueUnit: string,
  point: (time: number, rate: number, wobble: number) => Observation,
): Series[] {
  return CONDITIONS.map(({ batch, temperatureC, times, rate }, c) => ({
    id: `${name === null ? '' : `${name} · `}${batch} @ ${temperatureC} °C`,
    ...(name === null ? {} : { attribute: name }),
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit,
    observations: times.map((time, i) => ({
      ...point(time, rate, SCATTER[(i + c) % SCATTER.length] ?? 0),
      source: { row: 2 + i, cell: `D${2 + i + 10 * c}` },
    })),
  }));
}

export const assaySeries = (name: string | null = 'Assay') =>
  attributeSeries(name, '% of label claim', (time, rate, wobble) => ({
    time,
    value: Number((100 - 0.15 * rate * time + wobble).toFixed(2)),
  }));

export const impuritySeries = () =>
  attributeSeries('Impurity B', '% of label claim', (time, rate, wobble) => {
    const value = Number((0.01 + 0.03 * rate * time + wobble / 10).toFixed(3));
    return time <= 3 && rate === 1 ? { time, value: 0, censored: { text: '<LOQ' } } : { time, value };
  });

export const waterSeries = () =>
  attributeSeries('Water', '% w/w', (time, rate, wobble) => ({
    time,
    value: Number((2 + 0.05 * rate * time + wobble).toFixed(2)),
  }));

export async function seedStudy(
  db: Executor,
  context: { organisationId: number; userId: number },
  fields: Partial<typeof studies.$inferInsert> = {},
): Promise<number> {
  const [study] = await db
    .insert(studies)
    .values({
      organisationId: context.organisationId,
      title: 'Corvalide registration stability (invented)',
      product: 'Corvalide 20 mg tablets (invented)',
      attribute: 'Assay',
      unit: '% of label claim',
      direction: 'decreasing',
      lowerLimit: 95,
      upperLimit: null,
      storageTemperatureC: 25,
      storageHumidityPercent: 60,
      storageCategory: 'room-temperature',
      acceleratedTemperatureC: 40,
      acceleratedChange: 'none',
      supportingData: 'yes',
      massBalanceRole: 'assay',
      additionalAttributes: [IMPURITY_B, WATER],
      batches: ['CV-01', 'CV-02', 'CV-03'],
      createdBy: context.userId,
      ...fields,
    })
    .returning({ id: studies.id });
  return study!.id;
}

export async function seedDataset(
  db: Executor,
  context: { organisationId: number; userId: number },
  studyId: number,
  series: Series[],
): Promise<number> {
  const content = Buffer.from(JSON.stringify(series), 'utf8');
  const [upload] = await db
    .insert(uploads)
    .values({
      organisationId: context.organisationId,
      studyId,
      fileName: 'corvalide-stability.csv',
      mediaType: 'text/csv',
      format: 'csv',
      sizeBytes: content.length,
      sha256: createHash('sha256').update(content).digest('hex'),
      content,
      uploadedBy: context.userId,
    })
    .returning({ id: uploads.id });
  const [dataset] = await db
    .insert(datasets)
    .values({
      organisationId: context.organisationId,
      studyId,
      uploadId: upload!.id,
      mapping: { timeColumn: 'Month', timeUnit: 'month', seriesColumn: 'Batch' },
      series,
      pointCount: series.reduce((sum, entry) => sum + entry.observations.length, 0),
      sha256: seriesSha256(series),
      createdBy: context.userId,
    })
    .returning({ id: datasets.id });
  return dataset!.id;
}
