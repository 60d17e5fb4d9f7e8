import { and, eq, getTableColumns } from 'drizzle-orm';
import {
  type AnalysisOptions,
  analysisOptionsSchema,
  type ExcludePointRequest,
  type Exclusion,
} from '../../../shared/api/analyses.ts';
import type { StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import type { DatasetOptions } from '../../../shared/kinetics/analyse-dataset.ts';
import { studyAttributes } from '../../../shared/kinetics/stability/study-attributes.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { ENGINE_VERSION } from '../../../shared/kinetics/version.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { Executor } from '../../platform/db/client.ts';
import { analysisRuns, datasets, studies, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { assertNotRetired } from '../retirement/index.ts';
import { applyExclusions, type ResolvedExclusion } from './analysis-exclusions.ts';
import { COMPACT_FORM, decodeResult, encodeResult } from './compact-result.ts';
import { analysisRecordCache } from './record-cache.ts';
import { evaluateStudy, seriesAsRun } from './study-attribute-runs.ts';
import { linkRunToStudyVersion, type StudyStanding, studyAsRun } from './study-snapshot.ts';

/** Who asked: attributable to a person, or to the system for the demo seed. */
export interface AnalysisActor {
  userId: number;
  label: string;
}

export interface RunAnalysisInput {
  organisationId: number;
  datasetId: number;
  options?: Partial<AnalysisOptions>;
  exclusions?: Exclusion[];
  supersedesRunId?: number;
  actor: AnalysisActor;
  /** Audit action; a run made to exclude a point is recorded as such by `excludePoint`. */
  auditAction?: string;
  auditContext?: Record<string, unknown>;
}

type Study = typeof studies.$inferSelect;

export { engineOptions } from './study-attribute-runs.ts';

/**
 * Runs the kinetics engine on a stored dataset — every attribute of the study, each alone
 * (`evaluateStudy`; a study of one attribute exactly as before) — and records the run,
 * immutable, with everything needed to trace it: dataset id and SHA-256, options (the analyst's
 * and the study's), resolved exclusions with reasons, engine version, the full result and the
 * method statement — and an audit event, all in one transaction. The engine runs before the transaction opens, so a slow analysis
 * holds no locks; the run row and its audit event commit together or not at all.
 *
 * Throws HttpError 404 (dataset not in the organisation), 400 (exclusions that name no point,
 * engine option errors, the first attribute refused by the engine), 409 (superseding a run that a newer run already supersedes).
 */
export async function runAnalysis(
  db: Executor,
  input: RunAnalysisInput,
): Promise<{ runId: number; supersedesRunId: number | null }> {
  const options = analysisOptionsSchema.parse(input.options ?? {});
  const [found] = await db
    .select({ dataset: datasets, study: studies })
    .from(datasets)
    .innerJoin(studies, eq(studies.id, datasets.studyId))
    .where(and(eq(datasets.id, input.datasetId), eq(datasets.organisationId, input.organisationId)));
  if (!found) throw new HttpError(404, `There is no dataset ${input.datasetId} in your organisation.`);
  await assertNotRetired(db, input.organisationId, 'dataset', input.datasetId);
  const { dataset, study } = found;
  const { series, resolved } = applyExclusions(dataset.series, input.exclusions ?? []);
  // Every attribute of the study (one, as before, or several); study-attribute-runs.ts states the rules.
  const { result, methodStatement, engine, otherEngines } = evaluateStudy(series, study, options);
  const storedOptions = {
    analyst: options,
    engine,
    ...(otherEngines.length === 0 ? {} : { otherAttributes: otherEngines }),
  };
  // The compact form (issue 16): long number lists as exact doubles beside the JSON.
  const compact = encodeResult(result, series);
  return db.transaction(async (tx) => {
    if (input.supersedesRunId !== undefined)
      await assertLatest(tx, input.organisationId, input.supersedesRunId);
    const [run] = await tx
      .insert(analysisRuns)
      .values({
        organisationId: input.organisationId,
        studyId: study.id,
        datasetId: dataset.id,
        datasetSha256: dataset.sha256,
        options: storedOptions,
        exclusions: resolved,
        engineVersion: ENGINE_VERSION,
        result: compact.json,
        resultForm: COMPACT_FORM,
        resultArrays: compact.arrays,
        methodStatement,
        supersedesRunId: input.supersedesRunId ?? null,
        runBy: input.actor.userId,
      })
      .returning({ id: analysisRuns.id });
    const studyVersion = await linkRunToStudyVersion(tx, {
      runId: run!.id,
      usedStudy: study,
      recordedBy: input.actor.userId,
    });
    await appendAuditEvent(tx, {
      organisationId: input.organisationId,
      actorUserId: input.actor.userId,
      actorLabel: input.actor.label,
      action: input.auditAction ?? 'analysis.run',
      recordType: 'analysis_run',
      recordId: run!.id,
      after: {
        studyId: study.id,
        datasetId: dataset.id,
        datasetSha256: dataset.sha256,
        studyVersion,
        engineVersion: ENGINE_VERSION,
        options: storedOptions,
        exclusions: resolved,
        supersedesRunId: input.supersedesRunId ?? null,
      },
      context: input.auditContext ?? null,
    });
    return { runId: run!.id, supersedesRunId: input.supersedesRunId ?? null };
  });
}

/** A run may be superseded once; a second exclusion builds on the newest run. */
async function assertLatest(tx: Executor, organisationId: number, runId: number): Promise<void> {
  const [earlier] = await tx
    .select({ id: analysisRuns.id })
    .from(analysisRuns)
    .where(and(eq(analysisRuns.id, runId), eq(analysisRuns.organisationId, organisationId)))
    .for('update');
  if (!earlier) throw new HttpError(404, `There is no analysis ${runId} in your organisation.`);
  const newer = await supersedingRun(tx, runId);
  if (newer !== null) {
    throw new HttpError(
      409,
      `Analysis ${runId} is already superseded by analysis ${newer}; exclude points from that one.`,
      {
        supersededBy: newer,
      },
    );
  }
}

/** Excludes one more point: a new run with the earlier run's options and exclusions plus this one. */
export async function excludePoint(
  db: Executor,
  input: { organisationId: number; runId: number; request: ExcludePointRequest; actor: AnalysisActor },
): Promise<{ runId: number; supersedesRunId: number | null }> {
  const earlier = await getAnalysisRun(db, input.organisationId, input.runId);
  const previous = earlier.exclusions.map(({ seriesId, observationIndex, reason }) => ({
    seriesId,
    observationIndex,
    reason,
  }));
  const point = {
    seriesId: input.request.seriesId,
    observationIndex: input.request.observationIndex,
    reason: input.request.reason,
  };
  const series = earlier.series.find((candidate) => candidate.id === point.seriesId);
  const observation = series?.observations[point.observationIndex];
  if (!series || !observation) {
    const field = series ? 'observationIndex' : 'seriesId';
    throw new HttpError(400, 'Choose a point of this analysis to exclude.', [
      {
        field,
        message: series
          ? `Series ${series.id} has no point ${point.observationIndex + 1}.`
          : `There is no series "${point.seriesId}".`,
      },
    ]);
  }
  return runAnalysis(db, {
    organisationId: input.organisationId,
    datasetId: earlier.datasetId,
    options: earlier.options.analyst,
    exclusions: [...previous, point],
    supersedesRunId: earlier.id,
    actor: input.actor,
    auditAction: 'analysis.point-excluded',
    auditContext: {
      supersedesRunId: earlier.id,
      point: {
        seriesId: series.id,
        observationIndex: point.observationIndex,
        time: observation.time,
        value: observation.value,
        cell: observation.source?.cell ?? null,
      },
      reason: point.reason,
    },
  });
}

export interface AnalysisRunRecord {
  id: number;
  organisationId: number;
  studyId: number;
  studyTitle: string;
  /** The study as this run was computed against it (its study version), not as it is today. */
  study: Study;
  /** The run's study version and the versions recorded since. */
  studyStanding: StudyStanding;
  datasetId: number;
  datasetSha256: string;
  /** The analyst's options and the engine's: the first attribute's, then each other attribute's (several only). */
  options: {
    analyst: AnalysisOptions;
    engine: DatasetOptions;
    otherAttributes?: { attribute: string; engine: DatasetOptions }[];
  };
  exclusions: ResolvedExclusion[];
  engineVersion: string;
  result: StoredAnalysisResult;
  methodStatement: string;
  supersedesRunId: number | null;
  supersededByRunId: number | null;
  runBy: { id: number; fullName: string };
  runAt: Date;
  /** The dataset's series (every attribute's) with this run's exclusions and censored rules applied, as the engine saw them. */
  series: Series[];
}

/** Every column of a run but its result (read apart, through the cache). */
const { result: _result, resultArrays: _resultArrays, ...RUN_COLUMNS } = getTableColumns(analysisRuns);

/** One run, readable by every member of its organisation; 404 for any other. */
export async function getAnalysisRun(
  db: Executor,
  organisationId: number,
  runId: number,
): Promise<AnalysisRunRecord> {
  const [row] = await db
    .select({
      run: RUN_COLUMNS,
      study: studies,
      dataset: { id: datasets.id, pointCount: datasets.pointCount },
      runBy: { id: users.id, fullName: users.fullName },
    })
    .from(analysisRuns)
    .innerJoin(studies, eq(studies.id, analysisRuns.studyId))
    .innerJoin(datasets, eq(datasets.id, analysisRuns.datasetId))
    .innerJoin(users, eq(users.id, analysisRuns.runBy))
    .where(and(eq(analysisRuns.id, runId), eq(analysisRuns.organisationId, organisationId)));
  if (!row) throw new HttpError(404, `There is no analysis ${runId} in your organisation.`);
  // The run and its dataset are write-once: their long parts come from the process's cache
  // (record-cache.ts) once read, after the organisation check above.
  const weight = () => row.dataset.pointCount;
  const datasetSeries = await analysisRecordCache.get(
    `dataset:${row.dataset.id}`,
    async () => {
      const [found] = await db
        .select({ series: datasets.series })
        .from(datasets)
        .where(eq(datasets.id, row.dataset.id));
      return found!.series;
    },
    weight,
  );
  const exclusions = row.run.exclusions as ResolvedExclusion[];
  const { series: excluded } = applyExclusions(datasetSeries, exclusions);
  const frozen = await studyAsRun(db, row.run, row.study);
  const result = await analysisRecordCache.get(
    `result:${row.run.id}`,
    async () => {
      const [stored] = await db
        .select({ result: analysisRuns.result, resultArrays: analysisRuns.resultArrays })
        .from(analysisRuns)
        .where(eq(analysisRuns.id, row.run.id));
      return storedResult({ ...row.run, ...stored! }, excluded);
    },
    weight,
  );
  // The attributes the run recorded (a multi-attribute run keeps each with its rules), else the study's.
  const attributes =
    result.studyShelfLife?.attributes.map((entry) => entry.attribute) ?? studyAttributes(frozen.study);
  const series = seriesAsRun(excluded, attributes);
  return {
    id: row.run.id,
    organisationId: row.run.organisationId,
    studyId: row.study.id,
    studyTitle: frozen.study.title,
    study: frozen.study,
    studyStanding: frozen.standing,
    datasetId: row.run.datasetId,
    datasetSha256: row.run.datasetSha256,
    options: row.run.options as AnalysisRunRecord['options'],
    exclusions,
    engineVersion: row.run.engineVersion,
    result,
    methodStatement: row.run.methodStatement,
    supersedesRunId: row.run.supersedesRunId,
    supersededByRunId: await supersedingRun(db, row.run.id),
    runBy: row.runBy,
    runAt: row.run.runAt,
    series,
  };
}

/** The run's result in either stored form: JSON (runs before issue 16) or compact; never rewritten. */
function storedResult(
  run: Pick<typeof analysisRuns.$inferSelect, 'id' | 'result' | 'resultForm' | 'resultArrays'>,
  series: Series[],
): StoredAnalysisResult {
  if (run.resultForm === 'json') return run.result as StoredAnalysisResult;
  if (run.resultForm === COMPACT_FORM && run.resultArrays !== null)
    return decodeResult(run.result, run.resultArrays, series);
  throw new Error(`Analysis ${run.id} is stored in a form this version cannot read (${run.resultForm}).`);
}

async function supersedingRun(db: Executor, runId: number): Promise<number | null> {
  const [newer] = await db
    .select({ id: analysisRuns.id })
    .from(analysisRuns)
    .where(eq(analysisRuns.supersedesRunId, runId))
    .limit(1);
  return newer?.id ?? null;
}
