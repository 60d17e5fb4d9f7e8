import { createDemoDataset } from '../../server/demo/demo-study.ts';
import { runAnalysis } from '../../server/features/analysis/analysis-runs.ts';
import type { Database } from '../../server/platform/db/client.ts';

/**
 * An analysis run to make reports from, built the way the product builds one: the invented demo
 * study (fictional "Quillatrine 40 mg", server/demo/demo-study.ts) with its workbook stored as an
 * upload and imported as a dataset, then a run of the real engine through `runAnalysis`.
 */
export async function makeAnalysisRun(
  db: Database,
  organisationId: number,
  user: { id: number; email: string },
): Promise<{ runId: number; studyId: number; datasetId: number }> {
  const { studyId, datasetId } = await createDemoDataset(db, {
    organisationId,
    analystUserId: user.id,
    analystName: user.email,
  });
  const { runId } = await runAnalysis(db, {
    organisationId,
    datasetId,
    actor: { userId: user.id, label: user.email },
  });
  return { runId, studyId, datasetId };
}
