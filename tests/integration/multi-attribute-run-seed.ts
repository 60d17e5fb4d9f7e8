import { createHash } from 'node:crypto';
import {
  fixtureRun,
  fixtureSeries,
  fixtureStudy,
} from '../../server/features/analysis/analysis-run-fixture.ts';
import { seriesSha256 } from '../../server/features/intake/index.ts';
import type { Executor } from '../../server/platform/db/client.ts';
import { analysisRuns, datasets, studies, uploads } from '../../server/platform/db/schema/index.ts';

/**
 * A stored run of several attributes for the page, figures and export tests: the invented
 * "Fictolin 10 mg" study of `analysis-run-fixture.ts` (assay and Impurity B, "<LOQ" at month 0)
 * inserted as the product stores it — the study with its further attribute, an upload, the dataset
 * as intake keeps it (censored results with their text, the study's rule not yet applied) and the
 * run row with the multi-attribute result (analysis_runs is write-once: insert only).
 */
export async function seedMultiAttributeRun(
  db: Executor,
  organisationId: number,
  userId: number,
): Promise<{ runId: number; studyId: number; expected: ReturnType<typeof fixtureRun> }> {
  const expected = fixtureRun(true);
  const { id: _id, createdAt: _created, updatedAt: _updated, ...studyFields } = fixtureStudy(true);
  const [study] = await db
    .insert(studies)
    .values({ ...studyFields, organisationId, createdBy: userId })
    .returning({ id: studies.id });
  const series = fixtureSeries(true).map((entry) => ({
    ...entry,
    observations: entry.observations.map(({ excluded: _excluded, ...observation }) => observation),
  }));
  const content = Buffer.from(JSON.stringify(series), 'utf8');
  const [upload] = await db
    .insert(uploads)
    .values({
      organisationId,
      studyId: study!.id,
      fileName: 'fictolin.csv',
      mediaType: 'text/csv',
      format: 'csv',
      sizeBytes: content.length,
      sha256: createHash('sha256').update(content).digest('hex'),
      content,
      uploadedBy: userId,
    })
    .returning({ id: uploads.id });
  const sha256 = seriesSha256(series);
  const [dataset] = await db
    .insert(datasets)
    .values({
      organisationId,
      studyId: study!.id,
      uploadId: upload!.id,
      mapping: { timeColumn: 'Month', timeUnit: 'month', seriesColumn: 'Batch' },
      series,
      pointCount: series.reduce((sum, entry) => sum + entry.observations.length, 0),
      sha256,
      createdBy: userId,
    })
    .returning({ id: datasets.id });
  const [run] = await db
    .insert(analysisRuns)
    .values({
      organisationId,
      studyId: study!.id,
      datasetId: dataset!.id,
      datasetSha256: sha256,
      options: expected.options,
      exclusions: [],
      engineVersion: expected.engineVersion,
      result: expected.result,
      methodStatement: expected.methodStatement,
      supersedesRunId: null,
      runBy: userId,
    })
    .returning({ id: analysisRuns.id });
  return { runId: run!.id, studyId: study!.id, expected };
}
