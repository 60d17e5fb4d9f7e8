import { and, asc, eq, type SQL, sql } from 'drizzle-orm';
import { type ReviewStandingName, reportRenditionUrl } from '../../../shared/api/report-standing.ts';
import {
  type ReportDetail,
  type ReportFilterOptions,
  type ReportListItem,
  type ReportListQuery,
  type ReportListResponse,
  reportHtmlUrl,
  reportPdfUrl,
} from '../../../shared/api/reports.ts';
import type { Executor } from '../../platform/db/client.ts';
import {
  reports,
  reportTemplateVersions,
  reportVersions,
  studies,
  users,
} from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { VERSION_STANDING, versionStandings } from './report-standing.ts';

/**
 * Reading reports: the organisation's history a page at a time with its filters, one report with
 * all its versions, and one version's stored outputs. Every query is scoped to the caller's
 * organisation; a report of another organisation is "not found", so ids reveal nothing.
 */

type ListRow = {
  id: number;
  report_number: string;
  title: string;
  created_at: Date | string;
  study_id: number;
  study_title: string;
  study_product: string;
  author_id: number;
  author_name: string;
  version_count: string | number;
  latest_version: number;
  latest_status: ReportListItem['latest']['renderStatus'];
  latest_review: ReviewStandingName;
  retired: boolean;
};

const iso = (value: Date | string) => (value instanceof Date ? value : new Date(value)).toISOString();

/** The filters of the list as SQL conditions (`lv` is each report's latest version). */
function listConditions(organisationId: number, query: ReportListQuery): SQL {
  const conditions: SQL[] = [sql`r.organisation_id = ${organisationId}`];
  if (query.status) conditions.push(sql`lv.render_status = ${query.status}`);
  // Reports with a version in that review standing (a signed v1 counts while v2 is a draft).
  if (query.review)
    conditions.push(sql`exists (select 1 from report_versions v
      left join report_reviews rr on rr.report_version_id = v.id
      where v.report_id = r.id and ${VERSION_STANDING} = ${query.review})`);
  if (query.studyId) conditions.push(sql`r.study_id = ${query.studyId}`);
  if (query.authorId) conditions.push(sql`r.author_id = ${query.authorId}`);
  if (query.from) conditions.push(sql`r.created_at >= (${query.from}::date)::timestamp at time zone 'UTC'`);
  if (query.to) conditions.push(sql`r.created_at < (${query.to}::date + 1)::timestamp at time zone 'UTC'`);
  if (!query.includeRetired) conditions.push(sql`not ${REPORT_RETIRED}`);
  return sql.join(conditions, sql` and `);
}

/** Whether report `r` was retired (server/features/retirement). */
const REPORT_RETIRED = sql`exists (select 1 from retirements rt where rt.record_type = 'report' and rt.record_id = r.id)`;

const LATEST_VERSION = sql`join lateral (
    select v.version_number, v.render_status, ${VERSION_STANDING} as review_state
    from report_versions v left join report_reviews rr on rr.report_version_id = v.id
    where v.report_id = r.id order by v.version_number desc limit 1
  ) lv on true`;

export async function listReports(
  db: Executor,
  organisationId: number,
  query: ReportListQuery,
): Promise<ReportListResponse> {
  const where = listConditions(organisationId, query);
  const counted = await db.execute<{ total: string }>(
    sql`select count(*) as total from reports r ${LATEST_VERSION} where ${where}`,
  );
  const total = Number(counted.rows[0]?.total ?? 0);
  const offset = (query.page - 1) * query.pageSize;
  const result = await db.execute<ListRow>(sql`
    select r.id, r.report_number, r.title, r.created_at,
      s.id as study_id, s.title as study_title, s.product as study_product,
      u.id as author_id, u.full_name as author_name,
      (select count(*) from report_versions c where c.report_id = r.id) as version_count,
      lv.version_number as latest_version, lv.render_status as latest_status,
      lv.review_state as latest_review, ${REPORT_RETIRED} as retired
    from reports r
    join studies s on s.id = r.study_id
    join users u on u.id = r.author_id
    ${LATEST_VERSION}
    where ${where}
    order by r.created_at desc, r.id desc
    limit ${query.pageSize} offset ${offset}`);
  return {
    items: result.rows.map((row) => ({
      id: row.id,
      reportNumber: row.report_number,
      title: row.title,
      study: { id: row.study_id, title: row.study_title, product: row.study_product },
      author: { id: row.author_id, fullName: row.author_name },
      createdAt: iso(row.created_at),
      versionCount: Number(row.version_count),
      retired: row.retired === true,
      latest: {
        versionNumber: row.latest_version,
        renderStatus: row.latest_status,
        reviewState: row.latest_review,
        pdfUrl: row.latest_status === 'ready' ? reportPdfUrl(row.id, row.latest_version) : null,
      },
    })),
    page: query.page,
    pageSize: query.pageSize,
    total,
    pageCount: Math.max(1, Math.ceil(total / query.pageSize)),
  };
}

/** Studies and authors that have reports, for the list's drop-downs. */
export async function reportFilterOptions(
  db: Executor,
  organisationId: number,
): Promise<ReportFilterOptions> {
  const studyRows = await db
    .selectDistinct({ id: studies.id, title: studies.title })
    .from(reports)
    .innerJoin(studies, eq(studies.id, reports.studyId))
    .where(eq(reports.organisationId, organisationId))
    .orderBy(asc(studies.title), asc(studies.id));
  const authorRows = await db
    .selectDistinct({ id: users.id, fullName: users.fullName })
    .from(reports)
    .innerJoin(users, eq(users.id, reports.authorId))
    .where(eq(reports.organisationId, organisationId))
    .orderBy(asc(users.fullName), asc(users.id));
  return { studies: studyRows, authors: authorRows };
}

/** One report with every version and its state; 404 outside the organisation. */
export async function getReportDetail(
  db: Executor,
  organisationId: number,
  reportId: number,
): Promise<ReportDetail> {
  const [row] = await db
    .select({
      report: reports,
      study: { id: studies.id, title: studies.title, product: studies.product },
      author: { id: users.id, fullName: users.fullName },
    })
    .from(reports)
    .innerJoin(studies, eq(studies.id, reports.studyId))
    .innerJoin(users, eq(users.id, reports.authorId))
    .where(and(eq(reports.id, reportId), eq(reports.organisationId, organisationId)));
  if (!row) throw new HttpError(404, `There is no report ${reportId} in your organisation.`);
  const versions = await db
    .select({
      version: reportVersions,
      templateVersionNumber: reportTemplateVersions.versionNumber,
      requestedBy: { id: users.id, fullName: users.fullName },
    })
    .from(reportVersions)
    .innerJoin(reportTemplateVersions, eq(reportTemplateVersions.id, reportVersions.templateVersionId))
    .innerJoin(users, eq(users.id, reportVersions.requestedBy))
    .where(eq(reportVersions.reportId, reportId))
    .orderBy(asc(reportVersions.versionNumber));
  const standings = await versionStandings(db, reportId);
  return {
    id: row.report.id,
    reportNumber: row.report.reportNumber,
    title: row.report.title,
    study: row.study,
    author: row.author,
    createdAt: row.report.createdAt.toISOString(),
    versionCount: versions.length,
    analysisRunId: row.report.analysisRunId,
    analysisUrl: `/analyses/${row.report.analysisRunId}`,
    versions: versions.map(({ version, templateVersionNumber, requestedBy }) => {
      const ready = version.renderStatus === 'ready';
      const standing = standings.get(version.versionNumber) ?? {
        reviewState: 'draft' as const,
        supersededBy: null,
        signedPdfSha256: null,
      };
      return {
        versionNumber: version.versionNumber,
        analysisRunId: version.analysisRunId,
        templateVersionId: version.templateVersionId,
        templateVersionNumber,
        paperSize: version.paperSize,
        renderStatus: version.renderStatus,
        failureReason: version.failureReason,
        pdfSha256: version.pdfSha256,
        pdfByteSize: version.pdfByteSize,
        pageCount: version.pageCount,
        renderAttempts: version.renderAttempts,
        requestedBy,
        createdAt: version.createdAt.toISOString(),
        renderStartedAt: version.renderStartedAt?.toISOString() ?? null,
        finishedAt: version.finishedAt?.toISOString() ?? null,
        pdfUrl: ready ? reportPdfUrl(reportId, version.versionNumber) : null,
        renditionUrl: ready ? reportRenditionUrl(reportId, version.versionNumber) : null,
        htmlUrl: ready ? reportHtmlUrl(reportId, version.versionNumber) : null,
        ...standing,
      };
    }),
  };
}

export interface VersionOutput {
  versionId: number;
  reportNumber: string;
  title: string;
  versionNumber: number;
  renderStatus: ReportListItem['latest']['renderStatus'];
  html: string | null;
  pdfSha256: string | null;
}

/** One version's stored outputs; 404 for an unknown report or version. */
export async function getVersionOutput(
  db: Executor,
  organisationId: number,
  reportId: number,
  versionNumber: number,
): Promise<VersionOutput> {
  const [row] = await db
    .select({
      versionId: reportVersions.id,
      reportNumber: reports.reportNumber,
      title: reports.title,
      versionNumber: reportVersions.versionNumber,
      renderStatus: reportVersions.renderStatus,
      html: reportVersions.html,
      pdfSha256: reportVersions.pdfSha256,
    })
    .from(reportVersions)
    .innerJoin(reports, eq(reports.id, reportVersions.reportId))
    .where(
      and(
        eq(reports.id, reportId),
        eq(reports.organisationId, organisationId),
        eq(reportVersions.versionNumber, versionNumber),
      ),
    );
  if (!row) throw new HttpError(404, `Report ${reportId} has no version ${versionNumber}.`);
  return row;
}
