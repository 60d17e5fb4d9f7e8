import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Series } from '../../shared/kinetics/types.ts';
import type { Database } from '../../server/db/client.ts';
import { datasets, studies, uploads } from '../../server/db/schema/index.ts';
import { runAnalysis } from '../../server/services/analysis-runs.ts';

/**
 * An analysis run to make reports from, built the way the product builds one: a study, the
 * invented fixture workbook stored as an upload, its series as a dataset, and a run of the real
 * engine through the issue-4 service `runAnalysis`. The fixture (tests/fixtures/README.md) is
 * invented: "Veltrazine 10 mg tablets", three batches at 25 °C and one at 40, 50 and 60 °C.
 */
export const FIXTURE_CSV = path.resolve(import.meta.dirname, '../fixtures/veltrazine-stability.csv');

export function fixtureSeries(): Series[] {
  const lines = readFileSync(FIXTURE_CSV, 'utf8').trim().split(/\r?\n/).slice(1);
  const byKey = new Map<string, Series>();
  for (const [index, line] of lines.entries()) {
    const [batch, temperature, month, assay] = line.split(',');
    const id = `${batch} ${temperature} °C`;
    let series = byKey.get(id);
    if (!series) {
      series = { id, batch, temperatureC: Number(temperature), timeUnit: 'month', valueUnit: '% label claim', observations: [] };
      byKey.set(id, series);
    }
    series.observations.push({ time: Number(month), value: Number(assay), source: { row: index + 2 } });
  }
  return [...byKey.values()];
}

export async function makeAnalysisRun(
  db: Database,
  organisationId: number,
  user: { id: number; email: string },
  title = 'Veltrazine 10 mg — long-term and accelerated',
): Promise<{ runId: number; studyId: number }> {
  const bytes = readFileSync(FIXTURE_CSV);
  const [study] = await db
    .insert(studies)
    .values({
      organisationId,
      title,
      product: 'Veltrazine 10 mg tablets',
      attribute: 'Assay',
      unit: '% of label claim',
      direction: 'decreasing',
      lowerLimit: 90,
      storageTemperatureC: 25,
      storageHumidityPercent: 60,
      batches: ['VZ-001', 'VZ-002', 'VZ-003'],
      createdBy: user.id,
    })
    .returning();
  const [upload] = await db
    .insert(uploads)
    .values({
      organisationId,
      studyId: study!.id,
      fileName: 'veltrazine-stability.csv',
      mediaType: 'text/csv',
      format: 'csv',
      sizeBytes: bytes.length,
      sha256: createHash('sha256').update(bytes).digest('hex'),
      content: bytes,
      uploadedBy: user.id,
    })
    .returning();
  const series = fixtureSeries();
  const [dataset] = await db
    .insert(datasets)
    .values({
      organisationId,
      studyId: study!.id,
      uploadId: upload!.id,
      mapping: { note: 'built by tests/integration/reports-fixture.ts' },
      series,
      pointCount: series.reduce((sum, entry) => sum + entry.observations.length, 0),
      sha256: createHash('sha256').update(JSON.stringify(series)).digest('hex'),
      createdBy: user.id,
    })
    .returning();
  const { runId } = await runAnalysis(db, {
    organisationId,
    datasetId: dataset!.id,
    actor: { userId: user.id, label: user.email },
  });
  return { runId, studyId: study!.id };
}
