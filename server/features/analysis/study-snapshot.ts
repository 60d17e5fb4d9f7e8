/**
 * What an analysis run was computed against, frozen with it.
 *
 * Every run is linked (write-once, `analysis_run_study_versions`) to the study version whose values
 * the engine used: the link is written in the run's own transaction, which first takes the study
 * row FOR SHARE and refuses (409) when the study changed between reading it and recording the run.
 * Reading a run gives the study *as that version had it* — so its page, its exports and every
 * report rendered from it show the limits, unit and conditions it was computed against — together
 * with the versions recorded since (what changed, when, by whom, and why), so the page can say
 * plainly that the study has changed and offer to run again.
 *
 * Runs recorded before study versions existed were linked by migration 0011 to a version recorded
 * from the study as it stood then (`recorded-at-migration`). For those, the values the engine used
 * that the run kept in its own write-once `options.engine` (limits, direction, storage temperature
 * and, since migration 0008, the Q1E declaration) take precedence over that later record, and the
 * page says the snapshot was recorded at migration.
 */
import { and, eq } from 'drizzle-orm';
import { STUDY_FIELDS } from '../../../shared/api/studies.ts';
import type { DatasetOptions } from '../../../shared/kinetics/analyse-dataset.ts';
import type { Executor } from '../../platform/db/client.ts';
import {
  analysisRunStudyVersions,
  analysisRuns,
  studies,
  studyVersions,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import {
  ensureStudyVersion,
  STUDY_VERSION_DEFAULTS,
  type StudyVersionEntry,
  studyChanges,
  studyValues,
  studyVersionsAfter,
} from '../studies/index.ts';

type Study = typeof studies.$inferSelect;

/** Where the run's study values stand against the study today. */
export interface StudyStanding {
  versionNumber: number;
  /** 'with-run': recorded when the run was; 'recorded-at-migration': the run predates versions. */
  origin: 'with-run' | 'recorded-at-migration';
  recordedAt: Date;
  /** Versions recorded after the run's, oldest first; empty while the study is unchanged. */
  changedSince: StudyVersionEntry[];
}

/**
 * Links a new run to the study version it was computed with; call in the run's transaction. The
 * study must still hold the values the engine used (`usedStudy`), else 409.
 */
export async function linkRunToStudyVersion(
  tx: Executor,
  input: { runId: number; usedStudy: Study; recordedBy: number },
): Promise<number> {
  const [current] = await tx.select().from(studies).where(eq(studies.id, input.usedStudy.id)).for('share');
  const changes = current ? studyChanges(studyValues(input.usedStudy), studyValues(current)) : [];
  if (!current || changes.length > 0) {
    throw new HttpError(
      409,
      `The study changed while the analysis ran (${changes.map((change) => change.label).join(', ')}); run the analysis again.`,
    );
  }
  const version = await ensureStudyVersion(tx, current, input.recordedBy);
  await tx
    .insert(analysisRunStudyVersions)
    .values({ analysisRunId: input.runId, studyVersionId: version.id, origin: 'with-run' });
  return version.versionNumber;
}

/**
 * A field the version does not hold was added to studies after the version was recorded (e.g. the
 * working order, after migration 0011): the run had no such value, so it reads as empty rather
 * than as whatever the study says today — or, for the fields of several attributes (migration
 * 0020), as the value every study had then (`STUDY_VERSION_DEFAULTS`: one attribute, results
 * below a limit excluded, no mass-balance role).
 */
function notRecorded(current: Study, values: Record<string, unknown>): Partial<Study> {
  return Object.fromEntries(
    STUDY_FIELDS.filter((field) => !(field in values)).map((field) => [
      field,
      field in STUDY_VERSION_DEFAULTS
        ? STUDY_VERSION_DEFAULTS[field]
        : typeof current[field] === 'string'
          ? ''
          : Array.isArray(current[field])
            ? []
            : null,
    ]),
  ) as Partial<Study>;
}

/** The values the engine recorded in the run itself (present in every run's `options.engine`). */
function engineRecorded(engine: Partial<DatasetOptions> | undefined): Partial<Study> {
  if (!engine?.direction) return {};
  const q1e = engine.q1e;
  return {
    direction: engine.direction,
    lowerLimit: engine.lowerLimit ?? null,
    upperLimit: engine.upperLimit ?? null,
    storageTemperatureC: engine.storageTemperatureC ?? null,
    ...(q1e
      ? {
          storageCategory: q1e.storage,
          intermediateTemperatureC: q1e.intermediateTemperatureC ?? null,
          acceleratedTemperatureC: q1e.acceleratedTemperatureC ?? null,
          acceleratedChange: q1e.acceleratedChange,
          intermediateChange: q1e.intermediateChange,
          littleChange: q1e.littleChange,
          supportingData: q1e.supportingData,
        }
      : {}),
  };
}

/**
 * The study as the run was computed against it, and how it stands today. A run without a link
 * (impossible after migration 0011, kept as a guard) reads the study as it is, marked
 * `recorded-at-migration` with no version history to compare.
 */
export async function studyAsRun(
  db: Executor,
  run: { id: number; options: unknown },
  current: Study,
): Promise<{ study: Study; standing: StudyStanding }> {
  const [link] = await db
    .select({ link: analysisRunStudyVersions, version: studyVersions })
    .from(analysisRunStudyVersions)
    .innerJoin(studyVersions, eq(studyVersions.id, analysisRunStudyVersions.studyVersionId))
    .where(eq(analysisRunStudyVersions.analysisRunId, run.id));
  const engine = (run.options as { engine?: Partial<DatasetOptions> } | null)?.engine;
  if (!link) {
    return {
      study: { ...current, ...engineRecorded(engine) },
      standing: {
        versionNumber: 0,
        origin: 'recorded-at-migration',
        recordedAt: current.updatedAt,
        changedSince: [],
      },
    };
  }
  const migrated = link.link.origin === 'recorded-at-migration';
  const frozen = {
    ...current,
    ...notRecorded(current, link.version.values),
    ...(link.version.values as Partial<Study>),
    ...(migrated ? engineRecorded(engine) : {}),
  };
  return {
    study: frozen,
    standing: {
      versionNumber: link.version.versionNumber,
      origin: link.link.origin,
      recordedAt: link.version.recordedAt,
      changedSince: await studyVersionsAfter(db, current.id, link.version),
    },
  };
}

/** One plain sentence per later version: "lower limit 95 → 90, on …, by …, reason: …". */
export function standingSentences(standing: StudyStanding): string[] {
  const formatTime = (time: Date) => `${time.toISOString().replace('T', ' ').slice(0, 19)} UTC`;
  return standing.changedSince.map((entry) => {
    const what =
      entry.changes.length > 0
        ? entry.changes.map((change) => `${change.label} ${change.before} → ${change.after}`).join('; ')
        : 'no field changed';
    return `Version ${entry.versionNumber}: ${what}, on ${formatTime(entry.recordedAt)}, by ${entry.recordedBy}, reason: ${entry.reason}`;
  });
}

/** What the `study-standing` partial shows on the analysis and report pages. */
export function studyStandingModel(standing: StudyStanding, analysisRunId: number) {
  return {
    analysisRunId,
    versionNumber: standing.versionNumber,
    migrated: standing.origin === 'recorded-at-migration',
    recordedAt: standing.recordedAt,
    changed: standing.changedSince.length > 0,
    sentences: standingSentences(standing),
  };
}

/** The standing of one run's study version, without loading its dataset (for report pages). */
export async function runStudyStanding(
  db: Executor,
  organisationId: number,
  runId: number,
): Promise<StudyStanding | null> {
  const [row] = await db
    .select({ run: { id: analysisRuns.id, options: analysisRuns.options }, study: studies })
    .from(analysisRuns)
    .innerJoin(studies, eq(studies.id, analysisRuns.studyId))
    .where(and(eq(analysisRuns.id, runId), eq(analysisRuns.organisationId, organisationId)));
  return row ? (await studyAsRun(db, row.run, row.study)).standing : null;
}
