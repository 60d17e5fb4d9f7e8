import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import {
  analysisRuns,
  auditEvents,
  reportTemplateVersions,
  reportVersions,
} from '../../platform/db/schema/index.ts';
import { type ComparedResult, compareKeyResults, keyResults } from './key-results.ts';

/**
 * What changed since the previous version of the report, or since the previous review round of
 * this version, side by side (issue 13 §4): the inputs of the render (analysis run, template
 * version, paper), the key results of the two runs (`key-results.ts`) and the method statement's
 * text. Within one version the PDF cannot change (a rendered version is write-once), so a new
 * round shows the return comment it answers. Reads only.
 */

type VersionRow = typeof reportVersions.$inferSelect;

export interface VersionChanges {
  previousNumber: number | null;
  /** Inputs of the render, previous and now. */
  inputs: ComparedResult[];
  results: ComparedResult[];
  changedCount: number;
  methodStatement: { previous: string; current: string; changed: boolean } | null;
  /** The round this one follows (same PDF), with the reviewer's comment that ended it. */
  previousRound: { round: number; comment: string; samePdf: boolean } | null;
}

async function runsById(db: Executor, ids: number[]) {
  const rows = await db.select().from(analysisRuns).where(inArray(analysisRuns.id, ids));
  return new Map(rows.map((row) => [row.id, row]));
}

async function templateLabels(db: Executor, ids: number[]) {
  const rows = await db
    .select({
      id: reportTemplateVersions.id,
      number: reportTemplateVersions.versionNumber,
      sha256: reportTemplateVersions.sha256,
    })
    .from(reportTemplateVersions)
    .where(inArray(reportTemplateVersions.id, ids));
  return new Map(rows.map((row) => [row.id, `version ${row.number} (SHA-256 ${row.sha256.slice(0, 12)}…)`]));
}

async function previousRound(
  db: Executor,
  version: VersionRow,
  round: number,
): Promise<VersionChanges['previousRound']> {
  if (round < 2) return null;
  const [row] = await db
    .select({ after: auditEvents.afterValue })
    .from(auditEvents)
    .where(
      and(
        eq(auditEvents.action, 'review.returned'),
        eq(auditEvents.recordType, 'report_version'),
        eq(auditEvents.recordId, String(version.id)),
        sql`(${auditEvents.afterValue} ->> 'round')::int = ${round - 1}`,
      ),
    )
    .orderBy(desc(auditEvents.id))
    .limit(1);
  const comment = (row?.after as { comment?: unknown } | undefined)?.comment;
  return { round: round - 1, comment: typeof comment === 'string' ? comment : '', samePdf: true };
}

function inputRows(
  previous: VersionRow,
  current: VersionRow,
  templates: Map<number, string>,
): ComparedResult[] {
  const pairs: [string, string, string][] = [
    ['Analysis run', `run #${previous.analysisRunId}`, `run #${current.analysisRunId}`],
    [
      'Template',
      templates.get(previous.templateVersionId) ?? `#${previous.templateVersionId}`,
      templates.get(current.templateVersionId) ?? `#${current.templateVersionId}`,
    ],
    ['Paper', previous.paperSize, current.paperSize],
    ['Pages', String(previous.pageCount ?? '—'), String(current.pageCount ?? '—')],
    ['PDF SHA-256', previous.pdfSha256 ?? '—', current.pdfSha256 ?? '—'],
  ];
  return pairs.map(([label, before, now]) => ({
    label,
    previous: before,
    current: now,
    changed: before !== now,
  }));
}

/** The changes of `version` against the report's previous version and the previous review round. */
export async function versionChanges(
  db: Executor,
  version: VersionRow,
  round: number,
): Promise<VersionChanges> {
  const [previous] = await db
    .select()
    .from(reportVersions)
    .where(
      and(
        eq(reportVersions.reportId, version.reportId),
        sql`${reportVersions.versionNumber} < ${version.versionNumber}`,
        eq(reportVersions.renderStatus, 'ready'),
      ),
    )
    .orderBy(desc(reportVersions.versionNumber))
    .limit(1);
  const lastRound = await previousRound(db, version, round);
  if (!previous)
    return {
      previousNumber: null,
      inputs: [],
      results: [],
      changedCount: 0,
      methodStatement: null,
      previousRound: lastRound,
    };
  const [runs, templates] = await Promise.all([
    runsById(db, [previous.analysisRunId, version.analysisRunId]),
    templateLabels(db, [previous.templateVersionId, version.templateVersionId]),
  ]);
  const before = runs.get(previous.analysisRunId);
  const now = runs.get(version.analysisRunId);
  const results = before && now ? compareKeyResults(keyResults(before), keyResults(now)) : [];
  const inputs = inputRows(previous, version, templates);
  return {
    previousNumber: previous.versionNumber,
    inputs,
    results,
    changedCount: [...inputs, ...results].filter((row) => row.changed).length,
    methodStatement:
      before && now
        ? {
            previous: before.methodStatement,
            current: now.methodStatement,
            changed: before.methodStatement !== now.methodStatement,
          }
        : null,
    previousRound: lastRound,
  };
}
