/**
 * The study side of a temperature-log assessment: the Arrhenius fit of the study's latest
 * analysis (not retired), turned into what the log cost the product (`excursionImpact`): the
 * equivalent storage time at the labelled temperature, the predicted change of the attribute and
 * the margin to the acceptance limit left after it.
 *
 * The analysis used is named in the stored result (its number and engine version), so the
 * assessment can be traced to the fit it relied on; the run itself is write-once.
 */
import { and, desc, eq, notInArray } from 'drizzle-orm';
import type { StudyImpact } from '../../../shared/api/temperature-logs.ts';
import { excursionImpact } from '../../../shared/kinetics/temperature/excursion-impact.ts';
import type {
  TemperatureLogAssessment,
  TemperatureReading,
} from '../../../shared/kinetics/temperature/temperature-log.ts';
import { parseTimeUnit, type TimeUnit } from '../../../shared/kinetics/units.ts';
import type { Executor } from '../../platform/db/client.ts';
import { analysisRuns, retirements } from '../../platform/db/schema/index.ts';
import { getAnalysisRun } from '../analysis/index.ts';

export type { StudyImpact };

/** A refusal that belongs to one field of the form. */
export class StudyImpactRefused extends Error {
  constructor(
    readonly field: 'studyId' | 'latestValue',
    message: string,
  ) {
    super(message);
    this.name = 'StudyImpactRefused';
  }
}

async function latestRunId(db: Executor, organisationId: number, studyId: number): Promise<number | null> {
  const retired = db
    .select({ id: retirements.recordId })
    .from(retirements)
    .where(eq(retirements.recordType, 'analysis_run'));
  const [row] = await db
    .select({ id: analysisRuns.id })
    .from(analysisRuns)
    .where(
      and(
        eq(analysisRuns.organisationId, organisationId),
        eq(analysisRuns.studyId, studyId),
        notInArray(analysisRuns.id, retired),
      ),
    )
    .orderBy(desc(analysisRuns.id))
    .limit(1);
  return row?.id ?? null;
}

export async function studyImpact(
  db: Executor,
  organisationId: number,
  studyId: number,
  log: { readings: readonly TemperatureReading[]; assessment: TemperatureLogAssessment; timeUnit: TimeUnit },
  latestValue: number | undefined,
): Promise<StudyImpact> {
  const runId = await latestRunId(db, organisationId, studyId);
  if (runId === null) {
    throw new StudyImpactRefused(
      'studyId',
      'This study has no analysis yet; run one with data at two or more temperatures.',
    );
  }
  const run = await getAnalysisRun(db, organisationId, runId);
  const arrhenius = run.result.analysis.arrhenius;
  if (!arrhenius?.fit) {
    throw new StudyImpactRefused(
      'studyId',
      `The latest analysis of this study (no. ${run.id}) has no Arrhenius fit: it needs rate constants at two or more temperatures.`,
    );
  }
  const storageTemperatureC = run.study.storageTemperatureC;
  if (storageTemperatureC === null) {
    throw new StudyImpactRefused(
      'studyId',
      'The study states no storage temperature to compare the log with.',
    );
  }
  const rateTimeUnit = parseTimeUnit(run.series[0]?.timeUnit ?? 'month');
  const direction = run.study.direction;
  const limit =
    direction === 'decreasing'
      ? run.study.lowerLimit
      : direction === 'increasing'
        ? run.study.upperLimit
        : null;
  const impact = excursionImpact({
    fit: arrhenius.fit,
    order: arrhenius.order,
    storageTemperatureC,
    rateTimeUnit,
    logTimeUnit: log.timeUnit,
    held: log.readings.map((reading, i) => ({
      temperatureC: reading.temperatureC,
      duration: log.assessment.coverage[i] ?? 0,
    })),
    direction,
    ...(latestValue === undefined ? {} : { latestValue }),
    ...(limit === null || limit === undefined ? {} : { limit }),
  });
  return {
    ...impact,
    source: {
      studyId: run.studyId,
      studyTitle: run.study.title,
      product: run.study.product,
      attribute: run.study.attribute,
      unit: run.study.unit,
      analysisRunId: run.id,
      engineVersion: run.engineVersion,
      activationEnergyKJPerMol: arrhenius.fit.activationEnergy / 1000,
      fittedRangeC: arrhenius.fit.temperatureRangeC,
    },
    latestValue: latestValue ?? null,
    limit: limit ?? null,
    timeUnit: log.timeUnit,
  };
}
