/**
 * Temperature-log assessments: a data-logger file read, assessed and stored write-once with its
 * settings and result, in one transaction with its audit event; listed and opened per
 * organisation.
 *
 * The file is read in the parse worker (the same readers and limits as study uploads), so a large
 * log does not hold up the server. Anything unusable — the file, a column, a cell — is refused
 * before anything is written, with every problem named where it is (`TemperatureLogRefused`).
 */
import { and, desc, eq } from 'drizzle-orm';
import type { StoredTemperatureLogResult } from '../../../shared/api/temperature-logs.ts';
import { drawnReadings, temperatureLogPlotSpec } from '../../../shared/figures/temperature-log-plot.ts';
import type { TemperatureLogMapping } from '../../../shared/intake/temperature-log-from-grid.ts';
import { temperatureLogFromGrid } from '../../../shared/intake/temperature-log-from-grid.ts';
import { KineticsError } from '../../../shared/kinetics/numeric/kinetics-error.ts';
import { assessTemperatureLog } from '../../../shared/kinetics/temperature/temperature-log.ts';
import { temperatureLogDocument } from '../../../shared/kinetics/temperature/temperature-log-document.ts';
import {
  type TemperatureLogSettings,
  temperatureLogOptions,
} from '../../../shared/kinetics/temperature/temperature-log-settings.ts';
import { ENGINE_VERSION } from '../../../shared/kinetics/version.ts';
import type { AuditContext } from '../../platform/audit/audit-context.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database, Executor } from '../../platform/db/client.ts';
import {
  reports,
  reportVersions,
  reportVersionTemperatureLogs,
  temperatureLogAssessments,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { detectFormat, type ReceivedFile, readSheetsInWorker, sha256Hex } from '../intake/index.ts';
import { renderSvg } from '../reports/index.ts';
import { StudyImpactRefused, studyImpact } from './study-impact.ts';

export type TemperatureLogAssessmentRecord = typeof temperatureLogAssessments.$inferSelect;

/** The log could not be assessed: every problem, each with its place (sheet, cell, column). */
export { StudyImpactRefused };

export class TemperatureLogRefused extends HttpError {
  constructor(readonly problems: string[]) {
    super(422, problems.length === 1 ? (problems[0] as string) : `${problems.length} problems in the log.`);
    this.name = 'TemperatureLogRefused';
  }
}

export interface NewTemperatureLogAssessment {
  title: string;
  file: ReceivedFile;
  mapping: TemperatureLogMapping;
  settings: TemperatureLogSettings;
  studyId?: number;
  latestValue?: number;
}

export type { StoredTemperatureLogResult };

function rangeOf(settings: TemperatureLogSettings) {
  return settings.rangeMinC === undefined && settings.rangeMaxC === undefined
    ? null
    : { minC: settings.rangeMinC, maxC: settings.rangeMaxC };
}

/** Reads, assesses and stores a temperature log; nothing is stored when anything is refused. */
export async function createTemperatureLogAssessment(
  db: Database,
  actor: SessionUser,
  input: NewTemperatureLogAssessment,
  context: AuditContext,
  /** How the file's sheets are read: in the parse worker by default (the demo seed reads in place). */
  readSheets: typeof readSheetsInWorker = readSheetsInWorker,
): Promise<{ id: number }> {
  const { file } = input;
  const format = detectFormat(file.bytes, file.fileName);
  const sheets = await readSheets(file.bytes, format, file.fileName);
  const intake = temperatureLogFromGrid(sheets, input.mapping);
  if (!intake.ok) throw new TemperatureLogRefused(intake.problems.map((problem) => problem.text));
  let result: StoredTemperatureLogResult;
  try {
    const assessment = assessTemperatureLog(
      intake.readings,
      temperatureLogOptions(input.settings, intake.timeUnit),
    );
    const document = temperatureLogDocument(assessment, {
      file: file.fileName,
      sheet: intake.sheet,
      timeUnit: intake.timeUnit,
      startAt: intake.startAt,
      rangeC: rangeOf(input.settings),
    });
    const impact =
      input.studyId === undefined
        ? null
        : await studyImpact(
            db,
            actor.organisationId,
            input.studyId,
            { readings: intake.readings, assessment, timeUnit: intake.timeUnit },
            input.latestValue,
          );
    result = { ...document, impact };
  } catch (error) {
    if (error instanceof KineticsError) throw new TemperatureLogRefused([error.message]);
    throw error;
  }
  const drawn = drawnReadings(intake.readings, result);
  // biome-ignore lint/suspicious/noExplicitAny: the spec is plain Vega-Lite JSON built above.
  const figureSvg = await renderSvg(temperatureLogPlotSpec(result, drawn) as any, {
    idPrefix: 'templog',
    title: `Temperature log: ${input.title}`,
    description: `Temperature against time; ${drawn.points.length} of ${drawn.total} readings drawn; mean kinetic temperature ${result.mktC.toFixed(2)} °C.`,
  });
  const sha256 = file.sha256 ?? sha256Hex(file.bytes);
  return db.transaction(async (tx) => {
    const [row] = await tx
      .insert(temperatureLogAssessments)
      .values({
        organisationId: actor.organisationId,
        title: input.title,
        fileName: file.fileName,
        format,
        sizeBytes: file.bytes.length,
        sha256,
        content: Buffer.from(file.bytes.buffer, file.bytes.byteOffset, file.bytes.byteLength),
        mapping: input.mapping,
        settings: input.settings,
        result,
        figureSvg,
        mktC: result.mktC,
        maxC: result.maxC,
        excursionCount: result.excursions.length,
        engineVersion: ENGINE_VERSION,
        createdBy: actor.id,
      })
      .returning({ id: temperatureLogAssessments.id });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'temperature-log.assessed',
      recordType: 'temperature_log_assessment',
      recordId: row!.id,
      before: null,
      after: {
        title: input.title,
        fileName: file.fileName,
        sha256,
        readings: result.readings,
        mktC: result.mktC,
        maxC: result.maxC,
        excursions: result.excursions.length,
        gaps: result.gaps.length,
        settings: input.settings,
        ...(result.impact
          ? {
              studyId: result.impact.source.studyId,
              analysisRunId: result.impact.source.analysisRunId,
              latestValue: result.impact.latestValue,
            }
          : {}),
        engineVersion: ENGINE_VERSION,
      },
      context,
    });
    return { id: row!.id };
  });
}

export interface TemperatureLogListRow {
  id: number;
  title: string;
  fileName: string;
  mktC: number;
  maxC: number;
  excursionCount: number;
  createdAt: Date;
  createdBy: string;
}

export async function listTemperatureLogAssessments(
  db: Executor,
  organisationId: number,
): Promise<TemperatureLogListRow[]> {
  return db
    .select({
      id: temperatureLogAssessments.id,
      title: temperatureLogAssessments.title,
      fileName: temperatureLogAssessments.fileName,
      mktC: temperatureLogAssessments.mktC,
      maxC: temperatureLogAssessments.maxC,
      excursionCount: temperatureLogAssessments.excursionCount,
      createdAt: temperatureLogAssessments.createdAt,
      createdBy: users.fullName,
    })
    .from(temperatureLogAssessments)
    .innerJoin(users, eq(users.id, temperatureLogAssessments.createdBy))
    .where(eq(temperatureLogAssessments.organisationId, organisationId))
    .orderBy(desc(temperatureLogAssessments.id));
}

/** One assessment of the organisation; 404 for another organisation's, as for a missing one. */
export async function findTemperatureLogAssessment(
  db: Executor,
  organisationId: number,
  id: number,
): Promise<TemperatureLogAssessmentRecord & { createdByName: string }> {
  const [row] = await db
    .select({ assessment: temperatureLogAssessments, createdByName: users.fullName })
    .from(temperatureLogAssessments)
    .innerJoin(users, eq(users.id, temperatureLogAssessments.createdBy))
    .where(
      and(eq(temperatureLogAssessments.organisationId, organisationId), eq(temperatureLogAssessments.id, id)),
    );
  if (!row) throw new HttpError(404, 'There is no temperature-log assessment with this number.');
  return { ...row.assessment, createdByName: row.createdByName };
}

/** The report versions an assessment is attached to, newest first. */
export async function reportsOfAssessment(db: Executor, organisationId: number, assessmentId: number) {
  return db
    .select({
      reportId: reports.id,
      reportNumber: reports.reportNumber,
      title: reports.title,
      versionNumber: reportVersions.versionNumber,
    })
    .from(reportVersionTemperatureLogs)
    .innerJoin(reportVersions, eq(reportVersions.id, reportVersionTemperatureLogs.reportVersionId))
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        eq(reportVersionTemperatureLogs.assessmentId, assessmentId),
        eq(reports.organisationId, organisationId),
      ),
    )
    .orderBy(desc(reportVersions.id));
}

/** Reports an assessment can be attached to (the organisation's, newest first). */
export async function attachableReports(db: Executor, organisationId: number) {
  return db
    .select({ id: reports.id, reportNumber: reports.reportNumber, title: reports.title })
    .from(reports)
    .where(eq(reports.organisationId, organisationId))
    .orderBy(desc(reports.id))
    .limit(200);
}

/** The assessments attached to a report's latest version, in their order. */
export async function latestAttachments(db: Executor, reportId: number): Promise<number[]> {
  const [latest] = await db
    .select({ id: reportVersions.id })
    .from(reportVersions)
    .where(eq(reportVersions.reportId, reportId))
    .orderBy(desc(reportVersions.versionNumber))
    .limit(1);
  if (!latest) return [];
  const rows = await db
    .select({ id: reportVersionTemperatureLogs.assessmentId })
    .from(reportVersionTemperatureLogs)
    .where(eq(reportVersionTemperatureLogs.reportVersionId, latest.id))
    .orderBy(reportVersionTemperatureLogs.position);
  return rows.map((row) => row.id);
}
