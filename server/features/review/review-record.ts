import { and, desc, eq, sql } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { analysisRuns, auditEvents, datasets, uploads } from '../../platform/db/schema/index.ts';
import { seriesSha256 } from '../intake/index.ts';
import { sha256Hex } from '../reports/index.ts';

/**
 * What the version under review rests on, for the reviewer to follow and check (ALCOA+
 * "original" and "attributable"; 21 CFR 11.10(b), accurate and complete copies): the analysis
 * run, its dataset and the original uploaded file with their SHA-256 hashes, the analyst's
 * submission note, and a data check made now from the stored records — the file's bytes hashed
 * again, the dataset's series hashed again, compared with what the run recorded as its input —
 * with the engine's warnings. Reads only.
 */

export interface DataCheckLine {
  ok: boolean;
  text: string;
}

export interface ReviewRecord {
  analysis: { id: number; href: string; engineVersion: string };
  dataset: { id: number; href: string; sha256: string; pointCount: number } | null;
  upload: { id: number; href: string; fileName: string; sha256: string; sizeBytes: number } | null;
  dataCheck: { ok: boolean; lines: DataCheckLine[]; warnings: string[] };
  submissionNote: string | null;
}

interface StoredWarnings {
  analysis?: {
    warnings?: { message: string }[];
    series?: { id: string; analysis: { warnings?: { message: string }[] } | null }[];
  };
}

/**
 * The engine's warnings of a stored result, as stored: warnings are lists of objects with text,
 * which the compact form (server/features/analysis/compact-result.ts) always leaves in JSON.
 */
function engineWarnings(result: unknown): string[] {
  const analysis = (result as StoredWarnings | null)?.analysis;
  if (!analysis) return [];
  const seriesWarnings = (analysis.series ?? []).flatMap((series) =>
    (series.analysis?.warnings ?? []).map((warning) => `${series.id}: ${warning.message}`),
  );
  return [...(analysis.warnings ?? []).map((warning) => warning.message), ...seriesWarnings];
}

/** The note of the submission that opened the current round, or null (none given, or never submitted). */
async function submissionNote(db: Executor, versionId: number, round: number): Promise<string | null> {
  if (round === 0) return null;
  const [row] = await db
    .select({ after: auditEvents.afterValue })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.action, 'review.submitted'),
        eq(auditEvents.recordType, 'report_version'),
        eq(auditEvents.recordId, String(versionId)),
        sql`(${auditEvents.afterValue} ->> 'round')::int = ${round}`,
      ),
    )
    .orderBy(desc(auditEvents.id))
    .limit(1);
  const note = (row?.after as { note?: unknown } | undefined)?.note;
  return typeof note === 'string' && note.length > 0 ? note : null;
}

function dataCheck(
  run: { datasetSha256: string; result: unknown },
  dataset: typeof datasets.$inferSelect | undefined,
  upload: typeof uploads.$inferSelect | undefined,
): ReviewRecord['dataCheck'] {
  const lines: DataCheckLine[] = [];
  if (upload) {
    const same = sha256Hex(upload.content) === upload.sha256;
    lines.push({
      ok: same,
      text: same
        ? 'The original file’s bytes, hashed again now, give the SHA-256 recorded when it was uploaded.'
        : 'The original file’s bytes no longer give the SHA-256 recorded when it was uploaded.',
    });
  } else lines.push({ ok: false, text: 'The original file of the dataset was not found.' });
  if (dataset) {
    const same = seriesSha256(dataset.series) === dataset.sha256;
    lines.push({
      ok: same,
      text: same
        ? 'The dataset’s series, hashed again now, give the dataset’s recorded SHA-256.'
        : 'The dataset’s series no longer give the dataset’s recorded SHA-256.',
    });
    const input = dataset.sha256 === run.datasetSha256;
    lines.push({
      ok: input,
      text: input
        ? 'The analysis recorded this dataset’s SHA-256 as its input.'
        : 'The analysis recorded another SHA-256 as its input than this dataset’s.',
    });
  } else lines.push({ ok: false, text: 'The dataset of the analysis was not found.' });
  const warnings = engineWarnings(run.result);
  return { ok: lines.every((line) => line.ok), lines, warnings };
}

/** The run, dataset and original file of a version, with the data check and the submission note. */
export async function loadReviewRecord(
  db: Executor,
  version: { id: number; analysisRunId: number },
  organisationId: number,
  round: number,
): Promise<ReviewRecord & { studyId: number }> {
  const [run] = await db
    .select()
    .from(analysisRuns)
    .where(and(eq(analysisRuns.id, version.analysisRunId), eq(analysisRuns.organisationId, organisationId)));
  if (!run) throw new Error(`analysis run ${version.analysisRunId} of a report version is missing`);
  const [[dataset], note] = await Promise.all([
    db.select().from(datasets).where(eq(datasets.id, run.datasetId)),
    submissionNote(db, version.id, round),
  ]);
  const [upload] = dataset ? await db.select().from(uploads).where(eq(uploads.id, dataset.uploadId)) : [];
  return {
    studyId: run.studyId,
    analysis: { id: run.id, href: `/analyses/${run.id}`, engineVersion: run.engineVersion },
    dataset: dataset
      ? {
          id: dataset.id,
          href: `/studies/${dataset.studyId}#datasets-heading`,
          sha256: dataset.sha256,
          pointCount: dataset.pointCount,
        }
      : null,
    upload: upload
      ? {
          id: upload.id,
          href: `/uploads/${upload.id}/original`,
          fileName: upload.fileName,
          sha256: upload.sha256,
          sizeBytes: upload.sizeBytes,
        }
      : null,
    dataCheck: dataCheck(run, dataset, upload),
    submissionNote: note,
  };
}
