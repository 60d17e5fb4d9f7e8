import { and, desc, eq, notInArray, notLike, or } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { analysisRuns, auditEvents, datasets } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { ReviewVersion } from './review-version.ts';

/**
 * The record a reviewer signs is more than the PDF: the report, the version, the analysis run it
 * was rendered from, that run's dataset and original file, and the study they belong to. A
 * signature must rest on the record as the reviewer saw it (21 CFR 11.10(e) and 11.70; EU GMP
 * Annex 11 §9): if anything of it changed between the page being shown and the signature being
 * applied — the study edited, the dataset or run retired, the version returned by another
 * reviewer — the signature is refused with 409 and the reviewer reads the page again.
 *
 * The stamp is the review's round and state with the id of the newest audit event that changed
 * any part of the record. Events that change nothing (refused or failed signing attempts, which
 * the same reviewer may cause while typing a password) do not count.
 */

export interface RecordUnderReview {
  organisationId: number;
  reportId: number;
  versionId: number;
  versionNumber: number;
  analysisRunId: number;
  datasetId: number | null;
  uploadId: number | null;
  studyId: number;
  round: number;
}

/** The parts of the record under review of one version, by id. Throws when the run is missing. */
export async function recordUnderReview(db: Executor, subject: ReviewVersion): Promise<RecordUnderReview> {
  const [row] = await db
    .select({ studyId: analysisRuns.studyId, datasetId: datasets.id, uploadId: datasets.uploadId })
    .from(analysisRuns)
    .leftJoin(datasets, eq(datasets.id, analysisRuns.datasetId))
    .where(
      and(
        eq(analysisRuns.id, subject.version.analysisRunId),
        eq(analysisRuns.organisationId, subject.report.organisationId),
      ),
    );
  if (!row) throw new Error(`analysis run ${subject.version.analysisRunId} of a report version is missing`);
  return {
    organisationId: subject.report.organisationId,
    reportId: subject.report.id,
    versionId: subject.version.id,
    versionNumber: subject.version.versionNumber,
    analysisRunId: subject.version.analysisRunId,
    datasetId: row.datasetId,
    uploadId: row.uploadId,
    studyId: row.studyId,
    round: subject.review.round,
  };
}

/** Audit events on any part of `record`: (record type, id) pairs of the version, report, run, dataset, file and study. */
export function eventsOfRecord(record: RecordUnderReview) {
  const pairs: [string, number | null][] = [
    ['report_version', record.versionId],
    ['report', record.reportId],
    ['analysis_run', record.analysisRunId],
    ['dataset', record.datasetId],
    ['upload', record.uploadId],
    ['study', record.studyId],
  ];
  return or(
    ...pairs
      .filter((pair): pair is [string, number] => pair[1] !== null)
      .map(([type, id]) => and(eq(auditEvents.recordType, type), eq(auditEvents.recordId, String(id)))),
  );
}

/**
 * The stamp of the record as it stands now: `round:state:newest-changing-event-id`. Pass `record`
 * when the caller has already loaded it (`recordUnderReview`).
 */
export async function recordStamp(
  db: Executor,
  subject: ReviewVersion,
  record?: RecordUnderReview,
): Promise<string> {
  record ??= await recordUnderReview(db, subject);
  const [newest] = await db
    .select({ id: auditEvents.id })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.organisationId, record.organisationId),
        eventsOfRecord(record),
        notLike(auditEvents.action, '%.refused-%'),
        notInArray(auditEvents.action, ['signature.failed', 'signature.locked']),
      ),
    )
    .orderBy(desc(auditEvents.id))
    .limit(1);
  return `${subject.review.round}:${subject.review.state}:${newest?.id ?? 0}`;
}

/**
 * Refuses (409) when the record changed since the form was shown (`shownStamp`, the form's hidden
 * field). Call it with the row locked (inside the signing transaction) to close the race, and
 * before costly work to fail early.
 */
export async function assertRecordUnchanged(
  db: Executor,
  subject: ReviewVersion,
  shownStamp: string | undefined,
): Promise<void> {
  if (shownStamp === undefined)
    throw new HttpError(400, 'The form is incomplete; reload the page.', [
      { field: 'form', message: 'The form is incomplete; reload the page.' },
    ]);
  if ((await recordStamp(db, subject)) !== shownStamp)
    throw new HttpError(
      409,
      'This record changed while you were reading it (the study, the data, the analysis or the review moved on). Nothing was signed. Read the page again, including the audit-trail entries, before you sign.',
    );
}
