/**
 * Importing a mapped upload into a dataset: the series the engine will analyse.
 *
 * The mapping is applied to the whole sheet by `seriesFromGrid`, which either gives every series
 * or every problem with its cell reference. On top of that the import refuses a file in which no
 * series has results at two different times (a single point, or only replicates at one time):
 * no rate can be read from it, so storing it would only move the failure to the analysis. A series
 * with one time among others that are usable is kept with a warning. On any problem the answer is
 * a 422 listing all of them and nothing is stored; otherwise the dataset (series, mapping, hash
 * over the canonical JSON of the series, point count), the saved mapping if asked for, and their
 * audit events are written in one transaction.
 *
 * A mapping that names attributes (several per sheet, issue 15 §1) is read against the study's
 * attributes (`studyAttributes`): a name in the mapping or in the attribute column that is not
 * one of them is refused with a 400 naming the field or the cell and the study's attributes, and
 * the study's spelling is stored on each series. A mapping that names none reads as before.
 */

import { sql } from 'drizzle-orm';
import type { ImportResponse, MappingCheck } from '../../../shared/api/uploads.ts';
import { type ColumnMapping, mappingNamesAttributes } from '../../../shared/intake/column-mapping.ts';
import { type IntakeProblem, intakeProblem } from '../../../shared/intake/intake-problem.ts';
import { type IntakeOptions, seriesFromGrid } from '../../../shared/intake/series-from-grid.ts';
import type { SheetGrid } from '../../../shared/intake/sheet-grid.ts';
import { studyAttributes } from '../../../shared/kinetics/stability/study-attributes.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { canonicalJson } from '../../platform/audit/canonical-json.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database } from '../../platform/db/client.ts';
import { datasets } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { type AuditContext, findStudy } from '../studies/index.ts';
import { checkDuplicateImport } from './duplicate-import.ts';
import { headerSignature, saveMapping } from './saved-mappings.ts';
import { findUpload, forgetUploadSheets, sha256Hex, sheetsOfUpload } from './uploads.ts';

/** Most problems listed in one answer; the count says how many more there were. */
export const MAX_PROBLEMS_LISTED = 200;

function distinctTimes(series: Series): number {
  return new Set(series.observations.map((observation) => observation.time)).size;
}

export interface MappedSeries {
  ok: boolean;
  series: Series[];
  problems: IntakeProblem[];
  warnings: IntakeProblem[];
  /** Attribute names that are not the study's (also in `problems`). */
  attributeProblems?: IntakeProblem[];
}

/** Applies the mapping and the import's own rule (some series must span two times). */
export function mapSheets(
  sheets: readonly SheetGrid[],
  mapping: ColumnMapping,
  options: IntakeOptions = {},
): MappedSeries {
  const result = seriesFromGrid(sheets, mapping, options);
  if (!result.ok) {
    return {
      ok: false,
      series: [],
      problems: result.problems,
      warnings: result.warnings,
      ...(result.attributeProblems ? { attributeProblems: result.attributeProblems } : {}),
    };
  }
  const warnings = [...result.warnings];
  const singleTime = result.series.filter((series) => distinctTimes(series) < 2);
  const describe = (series: Series, hint = '') => {
    const first = series.observations[0];
    const count = series.observations.length;
    const what = count === 1 ? 'has a single result' : `has ${count} results, all`;
    return intakeProblem(
      first?.source?.cell,
      `series "${series.id}" ${what} at time ${first?.time ?? '?'} ${series.timeUnit}; a rate needs results at two or more different times${hint}`,
    );
  };
  if (singleTime.length === result.series.length) {
    // No series has two times: the file holds no rate, or the time column is not the time.
    const hint = `; check that the time column "${mapping.timeColumn}" holds the time of each pull`;
    return { ok: false, series: [], problems: singleTime.map((series) => describe(series, hint)), warnings };
  }
  for (const series of singleTime) {
    const problem = describe(series);
    warnings.push({ ...problem, text: `${problem.text} (kept, but it cannot be fitted on its own)` });
  }
  return { ok: true, series: result.series, problems: [], warnings };
}

/** 1-based rows whose time repeats within their series: the replicates. */
export function replicateRows(series: readonly Series[]): number[] {
  const rows: number[] = [];
  for (const entry of series) {
    const byTime = new Map<number, number[]>();
    for (const observation of entry.observations) {
      const list = byTime.get(observation.time) ?? [];
      if (observation.source?.row !== undefined) list.push(observation.source.row);
      byTime.set(observation.time, list);
    }
    for (const list of byTime.values()) if (list.length > 1) rows.push(...list);
  }
  return rows.sort((a, b) => a - b);
}

/** The dry run the preview shows: what importing with this mapping would give. */
export function checkMapping(
  sheets: readonly SheetGrid[],
  mapping: ColumnMapping,
  options: IntakeOptions = {},
): MappingCheck {
  const mapped = mapSheets(sheets, mapping, options);
  return {
    ok: mapped.ok,
    problems: mapped.problems.slice(0, MAX_PROBLEMS_LISTED),
    warnings: mapped.warnings.slice(0, MAX_PROBLEMS_LISTED),
    replicateRows: replicateRows(mapped.series),
    seriesCount: mapped.series.length,
    pointCount: mapped.series.reduce((sum, series) => sum + series.observations.length, 0),
  };
}

const DIGIT_ZERO = 48;
const DIGIT_NINE = 57;

/**
 * True when every object in `value` already lists its keys in the order `canonicalJson` sorts
 * them to, none looks like an array index (which JavaScript would list first), and nothing has a
 * `toJSON` of its own: then plain `JSON.stringify` writes exactly the canonical text.
 */
function inCanonicalOrder(value: unknown): boolean {
  if (value === null || typeof value !== 'object') return true;
  if (Array.isArray(value)) {
    for (const entry of value)
      if (entry !== null && typeof entry === 'object' && !inCanonicalOrder(entry)) return false;
    return true;
  }
  if (value instanceof Date) return !Number.isNaN(value.getTime());
  if ('toJSON' in value) return false;
  let previous: string | undefined;
  for (const key in value) {
    if (!Object.hasOwn(value, key)) return false;
    const first = key.charCodeAt(0);
    if (first >= DIGIT_ZERO && first <= DIGIT_NINE) return false;
    if (previous !== undefined && !(previous < key)) return false;
    previous = key;
    const entry = (value as Record<string, unknown>)[key];
    if (entry !== null && typeof entry === 'object' && !inCanonicalOrder(entry)) return false;
  }
  return true;
}

/**
 * The same text as `canonicalJson(series)` (JSON with keys sorted at every level). The intake
 * builds series with their keys already in that order, so the text is usually plain
 * `JSON.stringify`, without a sorted copy of every one of 100,000 observations; series in another
 * key order (read back from jsonb, for one) go through `canonicalJson`.
 */
export function canonicalSeriesJson(series: readonly Series[]): string {
  return inCanonicalOrder(series) ? JSON.stringify(series) : canonicalJson(series);
}

export function seriesSha256(series: readonly Series[]): string {
  return sha256Hex(canonicalSeriesJson(series));
}

/**
 * What the study lets a mapping name: its attribute names, when the mapping names attributes
 * (a mapping that names none reads one attribute, the study's first, as before).
 */
export function intakeOptionsForStudy(
  study: Parameters<typeof studyAttributes>[0],
  mapping: ColumnMapping,
): IntakeOptions {
  if (!mappingNamesAttributes(mapping)) return {};
  const attributes = studyAttributes(study);
  return {
    attributes: attributes.map((attribute) => attribute.name),
    attributeUnits: attributes.map((attribute) => attribute.unit),
  };
}

function attributesError(problems: IntakeProblem[]): HttpError {
  const noun = problems.length === 1 ? 'an attribute' : 'attributes';
  return new HttpError(
    400,
    `The mapping or the sheet names ${noun} this study does not have; nothing was stored. Match each value to one of the study's attributes (listed below), or add the attribute to the study first.`,
    problems.slice(0, MAX_PROBLEMS_LISTED),
  );
}

function problemsError(problems: IntakeProblem[]): HttpError {
  const count = problems.length;
  const listed = problems.slice(0, MAX_PROBLEMS_LISTED);
  const more = count > listed.length ? ` (the first ${listed.length} are listed)` : '';
  const noun = count === 1 ? 'problem' : 'problems';
  return new HttpError(
    422,
    `The file has ${count} ${noun} with this mapping${more}; nothing was stored. Fix the cells listed and import again.`,
    listed,
  );
}

export async function importUpload(
  db: Database,
  actor: SessionUser,
  uploadId: number,
  mapping: ColumnMapping,
  saveMappingAs: string | undefined,
  context: AuditContext,
  duplicateReason?: string,
): Promise<ImportResponse> {
  const upload = await findUpload(db, actor.organisationId, uploadId);
  const study = await findStudy(db, actor.organisationId, upload.studyId);
  const sheets = await sheetsOfUpload(upload);
  const mapped = mapSheets(sheets, mapping, intakeOptionsForStudy(study, mapping));
  if (mapped.attributeProblems) throw attributesError(mapped.attributeProblems);
  if (!mapped.ok) throw problemsError(mapped.problems);
  const series = mapped.series;
  const pointCount = series.reduce((sum, entry) => sum + entry.observations.length, 0);
  // The canonical text is hashed and is also what is stored (jsonb keeps no key order, so the
  // stored value is the same), which spares writing 100,000 observations out a second time.
  const seriesJson = canonicalSeriesJson(series);
  const sha256 = sha256Hex(seriesJson);
  const sheet = sheets.find((candidate) => candidate.name === mapping.sheet) ?? sheets[0]!;
  const storedMapping: ColumnMapping = { ...mapping, sheet: sheet.name };

  const stored = await db.transaction(async (tx) => {
    const duplicateOf = await checkDuplicateImport(tx, {
      uploadId: upload.id,
      mapping: storedMapping,
      reason: duplicateReason,
    });
    const [dataset] = await tx
      .insert(datasets)
      .values({
        organisationId: actor.organisationId,
        studyId: upload.studyId,
        uploadId: upload.id,
        mapping: storedMapping,
        series: sql`${seriesJson}::jsonb`,
        pointCount,
        sha256,
        createdBy: actor.id,
      })
      .returning({ id: datasets.id });
    await appendAuditEvent(tx, {
      organisationId: actor.organisationId,
      actorUserId: actor.id,
      actorLabel: actor.email,
      action: 'dataset.imported',
      recordType: 'dataset',
      recordId: dataset!.id,
      before: null,
      after: {
        studyId: upload.studyId,
        uploadId: upload.id,
        uploadSha256: upload.sha256,
        mapping: storedMapping,
        seriesIds: series.map((entry) => entry.id),
        pointCount,
        sha256,
        ...(duplicateOf === null ? {} : { duplicateOf, duplicateReason: duplicateReason?.trim() }),
      },
      context,
    });
    const savedMappingId =
      saveMappingAs === undefined
        ? null
        : await saveMapping(
            tx,
            actor,
            saveMappingAs,
            storedMapping,
            headerSignature(sheet, mapping.headerRow),
          );
    return {
      datasetId: dataset!.id,
      sha256,
      pointCount,
      series: series.map((entry) => {
        // Series come sorted by time from seriesFromGrid.
        const first = entry.observations[0]?.time ?? 0;
        const last = entry.observations[entry.observations.length - 1]?.time ?? first;
        return {
          id: entry.id,
          ...(entry.attribute !== undefined ? { attribute: entry.attribute } : {}),
          ...(entry.batch !== undefined ? { batch: entry.batch } : {}),
          ...(entry.temperatureC !== undefined ? { temperatureC: entry.temperatureC } : {}),
          points: entry.observations.length,
          distinctTimes: distinctTimes(entry),
          firstTime: first,
          lastTime: last,
          timeUnit: entry.timeUnit,
          valueUnit: entry.valueUnit,
        };
      }),
      warnings: mapped.warnings.slice(0, MAX_PROBLEMS_LISTED).map((warning) => warning.text),
      savedMappingId,
    };
  });
  forgetUploadSheets(upload);
  return stored;
}
