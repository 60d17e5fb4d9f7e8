import { useState } from 'react';
import { Link, useSearchParams } from 'react-router';
import { REVIEW_STANDING_LABELS, REVIEW_STANDINGS } from '../../../../shared/api/report-standing.ts';
import {
  RENDER_STATUSES,
  type ReportListQuery,
  reportListQuerySchema,
} from '../../../../shared/api/reports.ts';
import { TableRegion } from '../../../components/table-region.tsx';
import { useReportFilterOptions } from '../api/get-report-filter-options.ts';
import { useReportList } from '../api/list-reports.ts';
import { RenderStatusBadge, ReviewStandingBadge, utcTime } from './render-status.tsx';

const FILTERS = ['status', 'review', 'studyId', 'authorId', 'from', 'to', 'includeRetired'] as const;

/** The query the URL describes; a hand-edited URL that does not parse falls back to page 1. */
function queryFrom(params: URLSearchParams): { query: ReportListQuery; problem: string | null } {
  const parsed = reportListQuerySchema.safeParse(Object.fromEntries(params));
  if (parsed.success) return { query: parsed.data, problem: null };
  return {
    query: reportListQuerySchema.parse({}),
    problem: parsed.error.issues.map((issue) => issue.message).join(' '),
  };
}

/** The report history: the organisation's reports, filterable and a page at a time (server-side). */
export function ReportHistory() {
  const [params, setParams] = useSearchParams();
  const { query, problem } = queryFrom(params);
  const list = useReportList(query);
  const options = useReportFilterOptions();
  // Set by the person changing a filter or a page: only then does the live region speak.
  const [asked, setAsked] = useState(false);

  const setFilter = (name: (typeof FILTERS)[number] | 'page', value: string) => {
    setAsked(true);
    const next = new URLSearchParams(params);
    if (value === '') next.delete(name);
    else next.set(name, value);
    if (name !== 'page') next.delete('page');
    setParams(next);
  };

  return (
    <section>
      <h1 className="font-serif text-2xl">Reports</h1>
      <p className="mt-1 text-sm text-ink-muted">
        Every report of your organisation and each of its rendered versions, newest first. A stored PDF never
        changes; rendering again makes a new version.
      </p>

      <form
        className="mt-4 flex flex-wrap items-end gap-3 text-sm"
        aria-label="Filter reports"
        onSubmit={(event) => event.preventDefault()}
      >
        <label className="flex min-w-0 max-w-full flex-col">
          <span>Status</span>
          <select
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.status ?? ''}
            onChange={(event) => setFilter('status', event.target.value)}
          >
            <option value="">Any</option>
            {RENDER_STATUSES.map((status) => (
              <option key={status} value={status}>
                {status}
              </option>
            ))}
          </select>
        </label>
        <label className="flex min-w-0 max-w-full flex-col">
          <span>Review</span>
          <select
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.review ?? ''}
            onChange={(event) => setFilter('review', event.target.value)}
          >
            <option value="">Any</option>
            {REVIEW_STANDINGS.map((standing) => (
              <option key={standing} value={standing}>
                {REVIEW_STANDING_LABELS[standing]} (a version)
              </option>
            ))}
          </select>
        </label>
        <label className="flex min-w-0 max-w-full flex-col">
          <span>Study</span>
          <select
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.studyId ?? ''}
            onChange={(event) => setFilter('studyId', event.target.value)}
          >
            <option value="">Any</option>
            {options.data?.studies.map((study) => (
              <option key={study.id} value={study.id}>
                {study.title}
              </option>
            ))}
          </select>
        </label>
        <label className="flex min-w-0 max-w-full flex-col">
          <span>Author</span>
          <select
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.authorId ?? ''}
            onChange={(event) => setFilter('authorId', event.target.value)}
          >
            <option value="">Anyone</option>
            {options.data?.authors.map((author) => (
              <option key={author.id} value={author.id}>
                {author.fullName}
              </option>
            ))}
          </select>
        </label>
        <label className="flex min-w-0 max-w-full flex-col">
          <span>Created from</span>
          <input
            type="date"
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.from ?? ''}
            onChange={(event) => setFilter('from', event.target.value)}
          />
        </label>
        <label className="flex min-w-0 max-w-full flex-col">
          <span>to</span>
          <input
            type="date"
            className="max-w-full rounded-sm border border-rule bg-white px-2 py-1"
            value={query.to ?? ''}
            onChange={(event) => setFilter('to', event.target.value)}
          />
        </label>
        <label className="flex items-center gap-1.5 self-end py-1">
          <input
            type="checkbox"
            checked={query.includeRetired === true}
            onChange={(event) => setFilter('includeRetired', event.target.checked ? '1' : '')}
          />
          <span>include retired</span>
        </label>
        {FILTERS.some((name) => params.has(name)) && (
          <button
            type="button"
            className="rounded-sm border border-rule px-2 py-1 hover:bg-paper"
            onClick={() => {
              setAsked(true);
              setParams(new URLSearchParams());
            }}
          >
            Clear filters
          </button>
        )}
      </form>
      {/* The list changes in place as a filter changes: say what it now holds (WCAG 4.1.3). */}
      <p role="status" className="sr-only">
        {asked && list.data && !list.isPlaceholderData ? matchSummary(list.data) : ''}
      </p>
      {problem && (
        <p role="alert" className="mt-2 text-sm text-alert">
          {problem} Showing all reports instead.
        </p>
      )}

      <div className="mt-4 rounded-md border border-rule bg-white p-4">
        {list.isPending && <p className="text-ink-muted">Loading reports…</p>}
        {list.isError && (
          <p role="alert" className="text-alert">
            Could not load the reports: {list.error.message}
          </p>
        )}
        {list.data && list.data.items.length === 0 && (
          <p className="text-ink-muted">
            No reports match. Create one from an analysis with “Create report”.
          </p>
        )}
        {list.data && list.data.items.length > 0 && (
          <TableRegion label="Reports">
            <table className="w-full text-sm">
              <thead>
                <tr className="border-b border-rule text-left">
                  <th className="py-1 pr-3">Report</th>
                  <th className="py-1 pr-3">Title and study</th>
                  <th className="py-1 pr-3">Author</th>
                  <th className="py-1 pr-3">Created</th>
                  <th className="py-1 pr-3">Latest version</th>
                  <th className="py-1">PDF</th>
                </tr>
              </thead>
              <tbody>
                {list.data.items.map((report) => (
                  <tr key={report.id} className="border-b border-rule/50 align-top">
                    <td className="py-1.5 pr-3 font-semibold tabular-nums">
                      <Link className="text-ledger underline" to={`/reports/${report.id}`}>
                        {report.reportNumber}
                      </Link>
                      {report.retired && (
                        <span className="ml-1 rounded-sm bg-alert/10 px-1 text-xs font-normal text-alert">
                          retired
                        </span>
                      )}
                    </td>
                    <td className="py-1.5 pr-3">
                      {report.title}
                      <div className="text-xs text-ink-muted">{report.study.title}</div>
                    </td>
                    <td className="py-1.5 pr-3">{report.author.fullName}</td>
                    <td className="py-1.5 pr-3 tabular-nums">{utcTime(report.createdAt)}</td>
                    <td className="py-1.5 pr-3">
                      v{report.latest.versionNumber} <RenderStatusBadge status={report.latest.renderStatus} />{' '}
                      <ReviewStandingBadge standing={report.latest.reviewState} />
                      {report.versionCount > 1 && (
                        <span className="ml-1 text-xs text-ink-muted">({report.versionCount} versions)</span>
                      )}
                    </td>
                    <td className="py-1.5">
                      {report.latest.pdfUrl ? (
                        <a className="text-ledger underline" href={report.latest.pdfUrl} download>
                          {report.latest.reviewState === 'signed' ? 'Download signed PDF' : 'Download'}
                        </a>
                      ) : (
                        '—'
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableRegion>
        )}
        {list.data && list.data.total > 0 && (
          <nav aria-label="Pages" className="mt-3 flex items-center gap-3 text-sm">
            <button
              type="button"
              className="rounded-sm border border-rule px-2 py-1 disabled:opacity-40"
              disabled={query.page <= 1}
              onClick={() => setFilter('page', String(query.page - 1))}
            >
              Previous
            </button>
            <span>
              Page {list.data.page} of {list.data.pageCount} · {list.data.total} report
              {list.data.total === 1 ? '' : 's'}
            </span>
            <button
              type="button"
              className="rounded-sm border border-rule px-2 py-1 disabled:opacity-40"
              disabled={query.page >= list.data.pageCount}
              onClick={() => setFilter('page', String(query.page + 1))}
            >
              Next
            </button>
          </nav>
        )}
      </div>
    </section>
  );
}

/** "3 reports match; page 1 of 2." — what the live region says after a filter or page change. */
function matchSummary({ total, page, pageCount }: { total: number; page: number; pageCount: number }) {
  if (total === 0) return 'No reports match these filters.';
  const count = total === 1 ? '1 report matches' : `${total} reports match`;
  return pageCount > 1 ? `${count}; page ${page} of ${pageCount}.` : `${count}.`;
}
